import { useState } from "react";
import { useForm, useWatch } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link, useSearchParams } from "react-router-dom";
import type { z } from "zod";
import { resetPasswordSchema } from "../../../../shared/schemas/auth";
import { ApiError } from "../../../lib/api-client";
import { useResetPassword } from "../../../features/auth/api/reset-password";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { Notice, PasswordField, buttonClass } from "../../../components/ui/form";
import { PasswordStrength } from "../../../features/auth/components/password-strength";
import { passwordHint } from "../../../features/auth/lib/password-hint";

type Values = z.input<typeof resetPasswordSchema>;

export function ResetPasswordPage() {
  const [sp] = useSearchParams();
  const token = sp.get("token") ?? "";
  const reset = useResetPassword();
  const [done, setDone] = useState(false);
  const [formError, setFormError] = useState<{ code: string; message: string } | null>(null);
  const form = useForm<Values, unknown, z.output<typeof resetPasswordSchema>>({
    resolver: zodResolver(resetPasswordSchema),
    defaultValues: { token, newPassword: "" },
  });
  const newPassword = useWatch({ control: form.control, name: "newPassword" });
  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      await reset.mutateAsync(values);
      setDone(true);
    } catch (err) {
      const msg = applyServerErrors(err, form.setError, ["newPassword"]);
      if (msg) setFormError({ code: err instanceof ApiError ? err.code : "network", message: msg });
    }
  });

  if (!token) {
    return (
      <AuthLayout title="Reset your password">
        <Notice tone="error" title="The link is incomplete">
          Open the link from the e-mail again, or ask for a new one.
        </Notice>
        <p className="mt-4">
          <Link className={buttonClass.secondary} to={authPages.forgotPassword}>
            Ask for a new link
          </Link>
        </p>
      </AuthLayout>
    );
  }
  if (done) {
    return (
      <AuthLayout title="Password changed">
        <Notice tone="success" title="Your new password is set">
          You have been signed out everywhere. Sign in with the new password.
        </Notice>
        <p className="mt-4">
          <Link className={buttonClass.primary} to={authPages.signIn}>
            Sign in
          </Link>
        </p>
      </AuthLayout>
    );
  }
  return (
    <AuthLayout title="Choose a new password">
      {formError ? (
        <Notice tone="error" title="The password was not changed">
          {formError.message}{" "}
          {formError.code === "invalid_token" ? (
            <Link className="font-semibold text-kiln-700 underline" to={authPages.forgotPassword}>
              Ask for a new link
            </Link>
          ) : null}
        </Notice>
      ) : null}
      <form onSubmit={submit} noValidate className="mt-4 space-y-4">
        <input type="hidden" {...form.register("token")} />
        <PasswordField
          label="New password"
          autoComplete="new-password"
          hint={passwordHint}
          error={form.formState.errors.newPassword?.message}
          {...form.register("newPassword")}
        />
        {form.formState.errors.newPassword ? null : <PasswordStrength password={newPassword ?? ""} />}
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={reset.isPending}>
          {reset.isPending ? "Saving…" : "Set the new password"}
        </button>
      </form>
    </AuthLayout>
  );
}

import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link } from "react-router-dom";
import type { z } from "zod";
import { requestPasswordResetSchema } from "../../../../shared/schemas/auth";
import { useRequestPasswordReset } from "../../../features/auth/api/request-password-reset";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { DevMailHint } from "../../../features/auth/components/dev-mail-hint";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { Notice, buttonClass, EmailField } from "../../../components/ui/form";

type Values = z.input<typeof requestPasswordResetSchema>;

export function ForgotPasswordPage() {
  const request = useRequestPasswordReset();
  const [done, setDone] = useState(false);
  const [formError, setFormError] = useState<string | null>(null);
  const form = useForm<Values, unknown, z.output<typeof requestPasswordResetSchema>>({
    resolver: zodResolver(requestPasswordResetSchema),
    defaultValues: { email: "" },
  });
  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      await request.mutateAsync({ email: values.email });
      setDone(true);
    } catch (err) {
      setFormError(applyServerErrors(err, form.setError, ["email"]));
    }
  });
  return (
    <AuthLayout
      title="Reset your password"
      intro="We send a link that lets you choose a new one. It works once, for 1 hour."
    >
      {done ? (
        <Notice tone="success" title="Check your e-mail">
          If an account uses that address, a reset link is on its way. Resetting signs you out on every device.
          <DevMailHint />
        </Notice>
      ) : (
        <>
          {formError ? (
            <Notice tone="error" title="Could not send the link">
              {formError}
            </Notice>
          ) : null}
          <form onSubmit={submit} noValidate className="mt-4 space-y-4">
            <EmailField error={form.formState.errors.email?.message} {...form.register("email")} />
            <button type="submit" className={`${buttonClass.primary} w-full`} disabled={request.isPending}>
              {request.isPending ? "Sending…" : "Send the reset link"}
            </button>
          </form>
        </>
      )}
      <p className="mt-4 text-sm">
        <Link className="font-semibold text-kiln-700 underline" to={authPages.signIn}>
          Back to sign-in
        </Link>
      </p>
    </AuthLayout>
  );
}

import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link, useLocation, useNavigate, useSearchParams } from "react-router-dom";
import type { z } from "zod";
import { signInSchema } from "../../../../shared/schemas/auth";
import { ApiError } from "../../../lib/api-client";
import { useSignIn } from "../../../features/auth/api/sign-in";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { DemoSignIns } from "../../../features/auth/components/demo-sign-ins";
import { DevMailHint } from "../../../features/auth/components/dev-mail-hint";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { Notice, PasswordField, buttonClass, EmailField } from "../../../components/ui/form";

type Values = z.input<typeof signInSchema>;

function errorTitle(code: string): string {
  if (code === "email_not_verified") return "Confirm your e-mail address first";
  if (code === "rate_limited" || code === "sign_in_delayed") return "Too many attempts";
  return "Sign-in failed";
}

export function SignInPage() {
  const [sp] = useSearchParams();
  const location = useLocation();
  const navigate = useNavigate();
  const from = (location.state as { from?: string } | null)?.from ?? "/";
  const signIn = useSignIn();
  const [formError, setFormError] = useState<{ code: string; message: string } | null>(null);
  const form = useForm<Values, unknown, z.output<typeof signInSchema>>({
    resolver: zodResolver(signInSchema),
    defaultValues: { email: "", password: "" },
  });
  const { errors } = form.formState;

  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      await signIn.mutateAsync(values);
      navigate(from.startsWith("/") && !from.startsWith("//") ? from : "/", { replace: true });
    } catch (err) {
      const msg = applyServerErrors(err, form.setError, ["email", "password"]);
      if (msg) setFormError({ code: err instanceof ApiError ? err.code : "network", message: msg });
    }
  });

  const verified = sp.get("verified") === "1";
  const linkError = sp.get("error");

  return (
    <AuthLayout title="Sign in" intro="The second-opinion desk for scope captures.">
      <div className="space-y-3">
        {verified ? (
          <Notice tone="success" title="E-mail address confirmed">
            You can sign in now.
          </Notice>
        ) : null}
        {linkError ? (
          <Notice tone="error" title="That confirmation link did not work">
            It may have expired or been used. Sign in with your password and we will send a fresh link.
          </Notice>
        ) : null}
        {formError ? (
          <Notice tone="error" title={errorTitle(formError.code)}>
            {formError.message}
            {formError.code === "email_not_verified" ? <DevMailHint /> : null}
          </Notice>
        ) : null}
      </div>
      <form onSubmit={submit} noValidate className="mt-4 space-y-4">
        <EmailField error={errors.email?.message} {...form.register("email")} />
        <PasswordField
          label="Password"
          autoComplete="current-password"
          error={errors.password?.message}
          {...form.register("password")}
        />
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={signIn.isPending}>
          {signIn.isPending ? "Signing in…" : "Sign in"}
        </button>
      </form>
      <p className="mt-4 text-sm">
        <Link className="font-semibold text-kiln-700 underline" to={authPages.forgotPassword}>
          Forgot your password?
        </Link>
      </p>
      <div className="mt-5 border-t border-ink-100 pt-4 text-sm text-ink-700">
        <p>New to Burnline?</p>
        <ul className="mt-2 flex flex-col gap-2 sm:flex-row sm:gap-4">
          <li>
            <Link className="font-semibold text-kiln-700 underline" to={authPages.signUp}>
              Sign up your shop
            </Link>
          </li>
          <li>
            <Link className="font-semibold text-kiln-700 underline" to={authPages.apply}>
              Apply as an expert
            </Link>
          </li>
        </ul>
        <p className="mt-2 text-ink-500">Technicians join through an invitation from their shop's owner.</p>
      </div>
      <DemoSignIns
        disabled={signIn.isPending}
        onPick={(email, password) => {
          form.setValue("email", email);
          form.setValue("password", password);
          void submit();
        }}
      />
    </AuthLayout>
  );
}

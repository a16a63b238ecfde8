import { useState } from "react";
import { useForm, useWatch } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link, useNavigate, useSearchParams } from "react-router-dom";
import type { z } from "zod";
import { acceptInviteSchema } from "../../../../shared/schemas/auth";
import { useAcceptInvite, useInvitePreview, type InvitePreview } from "../../../features/auth/api/accept-invite";
import { useSignIn } from "../../../features/auth/api/sign-in";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { PasswordStrength } from "../../../features/auth/components/password-strength";
import { passwordHint } from "../../../features/auth/lib/password-hint";
import { Notice, PasswordField, TextField, buttonClass } from "../../../components/ui/form";

type Values = z.input<typeof acceptInviteSchema>;

/** A technician accepts an owner's invitation: name and password, then straight in. */
export function AcceptInvitePage() {
  const [sp] = useSearchParams();
  const token = sp.get("token") ?? "";
  const preview = useInvitePreview(token);

  if (!token || preview.isError) {
    return (
      <AuthLayout title="Invitation">
        <Notice tone="error" title="This invitation link does not work">
          {preview.error?.message ?? "The link is incomplete. Open it again from the e-mail."} Invitations work once,
          for 7 days; the shop's owner can send a new one.
        </Notice>
        <p className="mt-4">
          <Link className={buttonClass.secondary} to={authPages.signIn}>
            Go to sign-in
          </Link>
        </p>
      </AuthLayout>
    );
  }
  if (preview.isPending) return <p className="text-ink-500">Checking the invitation…</p>;
  return <AcceptForm token={token} invite={preview.data} />;
}

function AcceptForm({ token, invite }: { token: string; invite: InvitePreview }) {
  const accept = useAcceptInvite();
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [formError, setFormError] = useState<string | null>(null);
  const form = useForm<Values, unknown, z.output<typeof acceptInviteSchema>>({
    resolver: zodResolver(acceptInviteSchema),
    defaultValues: { token, name: invite.name ?? "", password: "" },
  });
  const [password, name] = useWatch({ control: form.control, name: ["password", "name"] });
  const { errors } = form.formState;

  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      const done = await accept.mutateAsync(values);
      await signIn.mutateAsync({ email: done.email, password: values.password });
      navigate("/", { replace: true });
    } catch (err) {
      setFormError(applyServerErrors(err, form.setError, ["name", "password"]));
    }
  });

  const busy = accept.isPending || signIn.isPending;
  return (
    <AuthLayout
      title={`Join ${invite.shopName}`}
      intro="You were invited as a technician: you open cases and send scope captures for a second opinion."
    >
      {formError ? (
        <Notice tone="error" title="Could not create your account">
          {formError}
        </Notice>
      ) : null}
      <form onSubmit={submit} noValidate className="mt-4 space-y-4">
        <TextField
          label="E-mail address"
          value={invite.email}
          readOnly
          hint="Set by the invitation; you sign in with it."
        />
        <TextField label="Your name" autoComplete="name" error={errors.name?.message} {...form.register("name")} />
        <PasswordField
          label="Choose a password"
          autoComplete="new-password"
          hint={passwordHint}
          error={errors.password?.message}
          {...form.register("password")}
        />
        {errors.password ? null : <PasswordStrength password={password ?? ""} userInputs={[name]} />}
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={busy}>
          {busy ? "Joining…" : `Join ${invite.shopName}`}
        </button>
      </form>
    </AuthLayout>
  );
}

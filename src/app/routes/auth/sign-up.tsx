import { useState } from "react";
import { useForm, useWatch } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link } from "react-router-dom";
import type { z } from "zod";
import { shopSignUpSchema } from "../../../../shared/schemas/auth";
import { PasswordStrength } from "../../../features/auth/components/password-strength";
import { passwordHint } from "../../../features/auth/lib/password-hint";
import { useSignUpShop } from "../../../features/auth/api/sign-up-shop";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { LinkSent } from "../../../features/auth/components/link-sent";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { Notice, PasswordField, TextField, buttonClass, EmailField } from "../../../components/ui/form";

type Values = z.input<typeof shopSignUpSchema>;

/** Sign-up of a shop owner: the shop and its first account. */
export function SignUpPage() {
  const signUp = useSignUpShop();
  const [formError, setFormError] = useState<string | null>(null);
  const [sentTo, setSentTo] = useState<string | null>(null);
  const form = useForm<Values, unknown, z.output<typeof shopSignUpSchema>>({
    resolver: zodResolver(shopSignUpSchema),
    defaultValues: { shopName: "", name: "", email: "", password: "" },
  });
  const [password, email, name, shopName] = useWatch({
    control: form.control,
    name: ["password", "email", "name", "shopName"],
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      await signUp.mutateAsync(values);
      setSentTo(values.email);
    } catch (err) {
      setFormError(applyServerErrors(err, form.setError, ["shopName", "name", "email", "password"]));
    }
  });

  if (sentTo) {
    return (
      <LinkSent title="Check your e-mail" noticeTitle="One more step" email={sentTo}>
        Open it, then sign in.
      </LinkSent>
    );
  }

  return (
    <AuthLayout
      title="Sign up your shop"
      intro="You become the shop's owner: you invite your technicians and handle billing."
    >
      {formError ? (
        <Notice tone="error" title="Sign-up failed">
          {formError}
        </Notice>
      ) : null}
      <form onSubmit={submit} noValidate className="mt-4 space-y-4">
        <TextField
          label="Shop name"
          autoComplete="organization"
          error={errors.shopName?.message}
          {...form.register("shopName")}
        />
        <TextField label="Your name" autoComplete="name" error={errors.name?.message} {...form.register("name")} />
        <EmailField error={errors.email?.message} {...form.register("email")} />
        <PasswordField
          label="Password"
          autoComplete="new-password"
          hint={passwordHint}
          error={errors.password?.message}
          {...form.register("password")}
        />
        {errors.password ? null : <PasswordStrength password={password ?? ""} userInputs={[email, name, shopName]} />}
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={signUp.isPending}>
          {signUp.isPending ? "Creating the shop…" : "Create the shop"}
        </button>
      </form>
      <p className="mt-4 text-sm text-ink-700">
        Already have an account?{" "}
        <Link className="font-semibold text-kiln-700 underline" to={authPages.signIn}>
          Sign in
        </Link>
        . Reviewing cases instead?{" "}
        <Link className="font-semibold text-kiln-700 underline" to={authPages.apply}>
          Apply as an expert
        </Link>
        .
      </p>
    </AuthLayout>
  );
}

import { useState } from "react";
import { Controller, useForm, useWatch } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Link } from "react-router-dom";
import type { z } from "zod";
import { expertApplicationSchema, expertSystems } from "../../../../shared/schemas/auth";
import { useApplyExpert } from "../../../features/auth/api/apply-expert";
import { authPages } from "../../../features/auth/api/paths";
import { AuthLayout } from "../../../features/auth/components/auth-layout";
import { LinkSent } from "../../../features/auth/components/link-sent";
import { applyServerErrors } from "../../../features/auth/lib/form-errors";
import { PasswordStrength } from "../../../features/auth/components/password-strength";
import { passwordHint } from "../../../features/auth/lib/password-hint";
import { systemLabels } from "../../../features/auth/lib/labels";
import {
  Notice,
  PasswordField,
  TextArea,
  TextField,
  buttonClass,
  inputClass,
  EmailField,
} from "../../../components/ui/form";

type Values = z.input<typeof expertApplicationSchema>;

/** Makes as one comma-separated text box, kept as a list in the form. */
function MakesInput({
  value,
  onChange,
  onBlur,
  error,
}: {
  value: string[];
  onChange: (v: string[]) => void;
  onBlur: () => void;
  error?: string;
}) {
  const [text, setText] = useState(value.join(", "));
  return (
    <div>
      <label htmlFor="apply-makes" className="mb-1 block text-sm font-semibold text-ink-800">
        Vehicle makes you know best <span className="font-normal text-ink-500">(optional)</span>
      </label>
      <input
        id="apply-makes"
        className={inputClass}
        value={text}
        aria-invalid={error ? true : undefined}
        aria-describedby={`apply-makes-hint${error ? " apply-makes-error" : ""}`}
        onBlur={onBlur}
        onChange={(e) => {
          setText(e.target.value);
          onChange(
            e.target.value
              .split(",")
              .map((m) => m.trim())
              .filter(Boolean),
          );
        }}
      />
      <p id="apply-makes-hint" className="mt-1 text-sm text-ink-500">
        Separate makes with commas. Leave empty if you take any make.
      </p>
      {error ? (
        <p id="apply-makes-error" role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** One checkbox per system the expert specialises in, kept as a list in the form. */
function SystemsChecks({
  value,
  onChange,
  onBlur,
}: {
  value: Values["systems"];
  onChange: (v: Values["systems"]) => void;
  onBlur: () => void;
}) {
  return (
    <div className="grid grid-cols-1 gap-2 min-[420px]:grid-cols-2 md:grid-cols-3">
      {expertSystems.map((s) => {
        const checked = value.includes(s);
        return (
          <label
            key={s}
            className={`flex min-h-11 cursor-pointer items-center gap-3 rounded-lg border px-3 py-2 text-sm has-[:focus-visible]:ring-2 has-[:focus-visible]:ring-kiln-400 ${checked ? "border-kiln-500 bg-kiln-50" : "border-ink-200 bg-white"}`}
          >
            <input
              type="checkbox"
              className="h-5 w-5 accent-kiln-600"
              checked={checked}
              onBlur={onBlur}
              onChange={(e) => onChange(e.target.checked ? [...value, s] : value.filter((x) => x !== s))}
            />
            {systemLabels[s]}
          </label>
        );
      })}
    </div>
  );
}

/** The expert application: specialties, makes and experience; the desk approves it. */
export function ApplyPage() {
  const apply = useApplyExpert();
  const [formError, setFormError] = useState<string | null>(null);
  const [sentTo, setSentTo] = useState<string | null>(null);
  const form = useForm<Values, unknown, z.output<typeof expertApplicationSchema>>({
    resolver: zodResolver(expertApplicationSchema),
    defaultValues: { name: "", email: "", password: "", systems: [], makes: [], bio: "" },
  });
  const [password, email, name] = useWatch({ control: form.control, name: ["password", "email", "name"] });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    try {
      await apply.mutateAsync(values);
      setSentTo(values.email);
    } catch (err) {
      setFormError(
        applyServerErrors(err, form.setError, [
          "name",
          "email",
          "password",
          "systems",
          "makes",
          "bio",
          "yearsExperience",
        ]),
      );
    }
  });

  if (sentTo) {
    return (
      <LinkSent title="Application received" noticeTitle="Confirm your e-mail address" email={sentTo}>
        After you confirm it, the desk reviews your application; you can sign in and see its status meanwhile.
      </LinkSent>
    );
  }

  const systemsError =
    errors.systems?.message ?? (Array.isArray(errors.systems) ? errors.systems.find(Boolean)?.message : undefined);
  return (
    <AuthLayout
      wide
      title="Apply as an expert"
      intro="Review scope captures from independent shops and get paid per case. The desk approves every expert."
    >
      {formError ? (
        <Notice tone="error" title="The application was not sent">
          {formError}
        </Notice>
      ) : null}
      <form onSubmit={submit} noValidate className="mt-4 grid gap-4 sm:grid-cols-2">
        <TextField label="Your name" autoComplete="name" error={errors.name?.message} {...form.register("name")} />
        <EmailField error={errors.email?.message} {...form.register("email")} />
        <div className="sm:col-span-2">
          <PasswordField
            label="Password"
            autoComplete="new-password"
            hint={passwordHint}
            error={errors.password?.message}
            {...form.register("password")}
          />
          {errors.password ? null : <PasswordStrength password={password ?? ""} userInputs={[email, name]} />}
        </div>
        <fieldset className="sm:col-span-2" aria-describedby={systemsError ? "apply-systems-error" : undefined}>
          <legend className="mb-1 text-sm font-semibold text-ink-800">Systems you specialise in</legend>
          <Controller
            control={form.control}
            name="systems"
            render={({ field }) => (
              <SystemsChecks value={field.value} onChange={field.onChange} onBlur={field.onBlur} />
            )}
          />
          {systemsError ? (
            <p id="apply-systems-error" role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
              {systemsError}
            </p>
          ) : null}
        </fieldset>
        <div className="sm:col-span-2">
          <Controller
            control={form.control}
            name="makes"
            render={({ field }) => (
              <MakesInput
                value={field.value}
                onChange={field.onChange}
                onBlur={field.onBlur}
                error={
                  errors.makes?.message ??
                  (Array.isArray(errors.makes) ? errors.makes.find(Boolean)?.message : undefined)
                }
              />
            )}
          />
        </div>
        <TextField
          label="Years of experience"
          optional
          type="number"
          inputMode="numeric"
          min={0}
          max={70}
          error={errors.yearsExperience?.message}
          {...form.register("yearsExperience", {
            setValueAs: (v) => (v === "" || v === undefined || v === null ? undefined : Number(v)),
          })}
        />
        <div className="sm:col-span-2">
          <TextArea
            label="Your experience"
            hint="What you diagnose, with which equipment, for how long. 20–2000 characters."
            error={errors.bio?.message}
            {...form.register("bio")}
          />
        </div>
        <div className="sm:col-span-2">
          <button type="submit" className={`${buttonClass.primary} w-full sm:w-auto`} disabled={apply.isPending}>
            {apply.isPending ? "Sending…" : "Send the application"}
          </button>
        </div>
      </form>
      <p className="mt-4 text-sm text-ink-700">
        Running a shop instead?{" "}
        <Link className="font-semibold text-kiln-700 underline" to={authPages.signUp}>
          Sign up your shop
        </Link>
        .
      </p>
    </AuthLayout>
  );
}

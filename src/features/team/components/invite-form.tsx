import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { z } from "zod";
import { inviteTechnicianSchema } from "../../../../shared/schemas/auth";
import { ApiError } from "../../../lib/api-client";
import { Notice, TextField, buttonClass, EmailField } from "../../../components/ui/form";
import { useInviteTechnician } from "../api/invite-technician";

type Values = z.input<typeof inviteTechnicianSchema>;

/** The owner invites a technician by e-mail. */
export function InviteForm({ shopId }: { shopId: string }) {
  const invite = useInviteTechnician(shopId);
  const [sent, setSent] = useState<string | null>(null);
  const [formError, setFormError] = useState<string | null>(null);
  const form = useForm<Values, unknown, z.output<typeof inviteTechnicianSchema>>({
    resolver: zodResolver(inviteTechnicianSchema),
    defaultValues: { email: "", name: "" },
  });
  const { errors } = form.formState;
  const submit = form.handleSubmit(async (values) => {
    setFormError(null);
    setSent(null);
    try {
      await invite.mutateAsync(values);
      setSent(values.email);
      form.reset();
    } catch (err) {
      if (err instanceof ApiError) {
        const fields = err.details?.fields ?? [];
        for (const f of fields)
          if (f.path === "email" || f.path === "name") form.setError(f.path, { type: "server", message: f.message });
        if (!fields.length || err.status === 409) setFormError(err.message);
      } else setFormError("Burnline could not be reached. Check the connection and try again.");
    }
  });
  return (
    <form onSubmit={submit} noValidate className="space-y-3" aria-label="Invite a technician">
      {sent ? (
        <Notice tone="success" title="Invitation sent">
          {sent} gets a link that works once, for 7 days.
        </Notice>
      ) : null}
      {formError ? (
        <Notice tone="error" title="Not sent">
          {formError}
        </Notice>
      ) : null}
      <div className="grid gap-3 md:grid-cols-[1fr_1fr_auto] md:items-start">
        <EmailField
          label="Technician's e-mail"
          autoComplete="off"
          error={errors.email?.message}
          {...form.register("email")}
        />
        <TextField label="Name" optional autoComplete="off" error={errors.name?.message} {...form.register("name")} />
        <button type="submit" className={`${buttonClass.primary} md:mt-6`} disabled={invite.isPending}>
          {invite.isPending ? "Sending…" : "Send invitation"}
        </button>
      </div>
    </form>
  );
}

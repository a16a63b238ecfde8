import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { useNavigate } from "react-router-dom";
import { answerSchema, ignitionSafetyNote, type AnswerInput } from "../../../../shared/schemas/queue";
import { ApiError } from "../../../lib/api-client";
import { buttonClass, Card, Notice, TextArea } from "../../../components/ui/form";
import { useExpertWorkflow } from "../api/get-expert-workflow";
import { useClaimCase, useExpertCaseActions } from "../api/queue-actions";
import { queuePages } from "../api/paths";

/**
 * The expert's controls on a case page: claim, hand back, ask for more data, write the answer.
 * Shown only when the server's abilities allow one of them.
 */
export function ExpertCaseActions({ caseId }: { caseId: string }) {
  const wf = useExpertWorkflow(caseId);
  const claim = useClaimCase();
  const actions = useExpertCaseActions(caseId);
  const nav = useNavigate();
  const [asking, setAsking] = useState(false);
  const [message, setMessage] = useState("");
  if (!wf.data) return null;
  const can = wf.data.abilities;
  if (!can.claim && !can.release && !can.requestData && !can.answer) return null;
  const claimError = claim.error instanceof ApiError ? claim.error.message : claim.error?.message;

  return (
    <Card
      id="expert-actions"
      title={
        wf.data.notFixedCount > 0 && can.answer
          ? "Second answer — the first fix did not work"
          : "Your work on this case"
      }
    >
      <div className="space-y-4">
        <div className="flex flex-wrap gap-3">
          {can.claim ? (
            <button
              type="button"
              className={buttonClass.primary}
              disabled={claim.isPending}
              onClick={() => claim.mutate(caseId)}
            >
              Claim this case
            </button>
          ) : null}
          {can.requestData ? (
            <button
              type="button"
              className={buttonClass.secondary}
              onClick={() => setAsking((v) => !v)}
              aria-expanded={asking}
            >
              Ask for more data
            </button>
          ) : null}
          {can.release ? (
            <button
              type="button"
              className={buttonClass.quiet}
              disabled={actions.release.isPending}
              onClick={() =>
                confirm("Hand this case back to the queue? Another expert can then take it.") &&
                actions.release.mutate(undefined, { onSuccess: () => nav(queuePages.queue) })
              }
            >
              Hand back to the queue
            </button>
          ) : null}
        </div>
        {claimError ? <Notice tone="error">{claimError}</Notice> : null}
        {actions.release.error ? <Notice tone="error">{actions.release.error.message}</Notice> : null}

        {asking && can.requestData ? (
          <form
            className="space-y-2"
            onSubmit={(e) => {
              e.preventDefault();
              if (message.trim()) actions.requestData.mutate(message.trim(), { onSuccess: () => setAsking(false) });
            }}
          >
            <TextArea
              label="What do you need?"
              hint="The shop is mailed at once; your deadline pauses until they answer."
              value={message}
              onChange={(e) => setMessage(e.target.value)}
              rows={3}
            />
            <button
              type="submit"
              className={buttonClass.primary}
              disabled={!message.trim() || actions.requestData.isPending}
            >
              Send the request
            </button>
            {actions.requestData.error ? <Notice tone="error">{actions.requestData.error.message}</Notice> : null}
          </form>
        ) : null}

        {can.answer ? (
          <AnswerForm onSubmit={(v) => actions.answer.mutateAsync(v)} error={actions.answer.error?.message} />
        ) : null}
      </div>
    </Card>
  );
}

function AnswerForm({ onSubmit, error }: { onSubmit: (v: AnswerInput) => Promise<unknown>; error?: string }) {
  const form = useForm<AnswerInput>({
    resolver: zodResolver(answerSchema),
    defaultValues: { diagnosis: "", rootCause: "", recommendedFix: "", testsToConfirm: "" },
  });
  const e = form.formState.errors;
  return (
    <form
      className="space-y-3"
      onSubmit={form.handleSubmit(async (v) => void (await onSubmit(v).catch(() => undefined)))}
      noValidate
    >
      <h3 className="font-bold text-ink-900">The answer</h3>
      <TextArea label="Diagnosis" rows={3} error={e.diagnosis?.message} {...form.register("diagnosis")} />
      <TextArea label="Root cause" rows={2} error={e.rootCause?.message} {...form.register("rootCause")} />
      <TextArea
        label="Recommended fix"
        rows={3}
        error={e.recommendedFix?.message}
        {...form.register("recommendedFix")}
      />
      <TextArea
        label="Tests to confirm the fix"
        rows={3}
        error={e.testsToConfirm?.message}
        hint="Shown to the shop with the safety note below."
        {...form.register("testsToConfirm")}
      />
      <p className="rounded-lg border border-kiln-300 bg-kiln-50 px-3 py-2 text-sm text-kiln-700">
        {ignitionSafetyNote}
      </p>
      <p className="text-sm text-ink-600">
        Sending the answer charges the shop's held payment; your share is added to your earnings.
      </p>
      <button type="submit" className={buttonClass.primary} disabled={form.formState.isSubmitting}>
        {form.formState.isSubmitting ? "Sending…" : "Send the answer"}
      </button>
      {error ? <Notice tone="error">{error}</Notice> : null}
    </form>
  );
}

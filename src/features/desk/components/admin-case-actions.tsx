import { useId, useState, type ReactNode } from "react";
import { Link } from "react-router-dom";
import type { WorkflowView } from "../../../../shared/views/workflow";
import { deadlineRisk } from "../../../../shared/domain/deadline-risk";
import { formatDateTime, formatMoney, formatTimeLeft } from "../../../../shared/format";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useAdminCaseActions, useApprovedExperts } from "../api/admin-actions";
import { deskPages } from "../api/paths";

const paymentState: Record<string, string> = {
  pending: "checkout open",
  failed: "declined",
  authorized: "held on the card",
  captured: "charged",
  released: "hold released, nothing charged",
  refunded: "refunded",
};

/**
 * The desk's view of a case and what an admin can do to it: refund the payment, hand the case to
 * another expert, or put it back in the queue — each with a reason (kept in the case's history)
 * and a second step that says exactly what will happen before it does.
 */
export function AdminCaseActions({ w }: { w: WorkflowView }) {
  const can = w.abilities;
  const left = formatTimeLeft(w.deadlineAt);
  const risk = deadlineRisk(w.status, w.deadlineAt, null);
  // what the last action came to (its step is gone once the case no longer allows it)
  const [done, setDone] = useState<string | null>(null);
  return (
    <Card id="desk-actions" title="The desk's view">
      <div className="space-y-4">
        <dl className="grid gap-x-6 gap-y-2 text-sm sm:grid-cols-2">
          <Fact label="Shop">
            {w.shopName ?? "—"}{" "}
            <Link className="whitespace-nowrap underline" to={deskPages.billingOf(w.shopId)}>
              its billing
            </Link>
          </Fact>
          <Fact label="Expert">{w.expert?.name ?? "Nobody yet"}</Fact>
          <Fact label="Answer due">
            {w.deadlineAt ? `${formatDateTime(w.deadlineAt)} (${left.text})` : "No deadline running"}
            {risk === "overdue" || risk === "at_risk" ? (
              <span className="ml-2 rounded bg-alarm-500 px-1.5 py-0.5 text-xs font-bold text-white">
                {risk === "overdue" ? "overdue" : "at risk"}
              </span>
            ) : null}
          </Fact>
          <Fact label="Payment">
            {w.payment
              ? `${formatMoney(w.payment.amountCents, w.payment.currency)} · ` +
                (paymentState[w.payment.status] ?? w.payment.status)
              : "None"}
          </Fact>
        </dl>
        {done ? (
          <p role="status" className="text-sm font-semibold text-verdigris-600">
            {done}
          </p>
        ) : null}
        {can.refund || can.reassign || can.release ? (
          <div className="space-y-3">
            {can.refund && w.payment ? <RefundAction w={w} onDone={setDone} /> : null}
            {can.reassign ? <ReassignAction w={w} onDone={setDone} /> : null}
            {can.release ? <ReleaseAction w={w} onDone={setDone} /> : null}
          </div>
        ) : (
          <p className="text-sm text-ink-600">Nothing for the desk to do on this case now.</p>
        )}
      </div>
    </Card>
  );
}

function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div>
      <dt className="text-ink-500">{label}</dt>
      <dd className="font-semibold text-ink-900">{children}</dd>
    </div>
  );
}

type Step = "closed" | "form" | "review";

/** One action in two steps: the reason (and choices), then a review that says what will happen. */
function TwoStep(props: {
  label: string;
  title: string;
  ready: boolean;
  review: string;
  confirmLabel: string;
  pending: boolean;
  error?: string;
  /** runs the action; resolves when it is done (the step then closes), rejects on a refusal */
  onConfirm: () => Promise<unknown>;
  children: ReactNode;
}) {
  const [step, setStep] = useState<Step>("closed");
  const close = () => setStep("closed");
  if (step === "closed") {
    return (
      <div>
        <button type="button" className={buttonClass.secondary} onClick={() => setStep("form")}>
          {props.label}
        </button>
      </div>
    );
  }
  return (
    <section aria-label={props.title} className="space-y-3 rounded-lg border border-ink-300 bg-ink-50 p-3">
      <h3 className="font-bold text-ink-900">{props.title}</h3>
      {step === "form" ? (
        <form
          className="space-y-3"
          onSubmit={(e) => {
            e.preventDefault();
            if (props.ready) setStep("review");
          }}
        >
          {props.children}
          <div className="flex flex-wrap gap-2">
            <button type="submit" className={buttonClass.primary} disabled={!props.ready}>
              Review
            </button>
            <button type="button" className={buttonClass.quiet} onClick={close}>
              Cancel
            </button>
          </div>
        </form>
      ) : (
        <div className="space-y-3">
          <p className="text-ink-900">{props.review}</p>
          <div className="flex flex-wrap gap-2">
            <button
              type="button"
              className={buttonClass.danger}
              disabled={props.pending}
              onClick={() => void props.onConfirm().then(close, () => undefined)}
            >
              {props.pending ? "Working…" : props.confirmLabel}
            </button>
            <button
              type="button"
              className={buttonClass.secondary}
              onClick={() => setStep("form")}
              disabled={props.pending}
            >
              Back
            </button>
          </div>
        </div>
      )}
      {props.error ? <Notice tone="error">{props.error}</Notice> : null}
    </section>
  );
}

function ReasonField({ value, onChange, hint }: { value: string; onChange: (v: string) => void; hint: string }) {
  const id = useId();
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-semibold text-ink-800">
        Reason
      </label>
      <textarea
        id={id}
        value={value}
        onChange={(e) => onChange(e.target.value)}
        rows={2}
        maxLength={500}
        aria-describedby={`${id}-hint`}
        className="block w-full rounded-lg border border-ink-300 bg-white px-3 py-2"
      />
      <p id={`${id}-hint`} className="mt-1 text-sm text-ink-500">
        {hint}
      </p>
    </div>
  );
}

type Done = (message: string) => void;

function RefundAction({ w, onDone }: { w: WorkflowView; onDone: Done }) {
  const { refund } = useAdminCaseActions(w.id);
  const [reason, setReason] = useState("");
  const p = w.payment!;
  const amount = formatMoney(p.amountCents, p.currency);
  const held = p.status === "authorized";
  const ends = ["queued", "claimed", "needs_data"].includes(w.status);
  const review =
    `${held ? `Release the ${amount} hold on` : `Refund ${amount} to`} ${w.shopName ?? "the shop"}'s card.` +
    (ends ? " The case ends now and no expert can answer it." : " The case keeps its state and its answer.") +
    ` Reason: “${reason.trim()}”.`;
  return (
    <TwoStep
      label="Refund the payment…"
      title="Refund the payment"
      ready={reason.trim().length > 0}
      review={review}
      confirmLabel={held ? `Yes, release ${amount}` : `Yes, refund ${amount}`}
      pending={refund.isPending}
      error={refund.error?.message}
      onConfirm={async () => {
        const r = await refund.mutateAsync(reason.trim());
        onDone(`Done: ${paymentState[r.payment.status] ?? r.payment.status}.`);
      }}
    >
      <ReasonField
        value={reason}
        onChange={setReason}
        hint="Kept in the case's history. The shop is told the money is back."
      />
    </TwoStep>
  );
}

function ReassignAction({ w, onDone }: { w: WorkflowView; onDone: Done }) {
  const { reassign } = useAdminCaseActions(w.id);
  const experts = useApprovedExperts(true);
  const [expertId, setExpertId] = useState("");
  const [reason, setReason] = useState("");
  const selectId = useId();
  const choices = (experts.data?.experts ?? []).filter((e) => e.userId !== w.expert?.id);
  const chosen = choices.find((e) => e.userId === expertId);
  return (
    <TwoStep
      label="Hand to another expert…"
      title="Hand the case to another expert"
      ready={!!chosen && reason.trim().length > 0}
      review={
        `Take the case from ${w.expert?.name ?? "its expert"} and hand it to ${chosen?.name ?? "—"}. ` +
        `The deadline stays ${w.deadlineAt ? formatDateTime(w.deadlineAt) : "as it is"}; both experts are told. ` +
        `Reason: “${reason.trim()}”.`
      }
      confirmLabel={`Yes, hand it to ${chosen?.name ?? "them"}`}
      pending={reassign.isPending}
      error={reassign.error?.message}
      onConfirm={async () => {
        await reassign.mutateAsync({ expertId, reason: reason.trim() });
        onDone(`Done: the case is with ${chosen?.name ?? "the new expert"}.`);
      }}
    >
      <div>
        <label htmlFor={selectId} className="mb-1 block text-sm font-semibold text-ink-800">
          Expert
        </label>
        <select
          id={selectId}
          value={expertId}
          onChange={(e) => setExpertId(e.target.value)}
          className="block min-h-11 w-full rounded-lg border border-ink-300 bg-white px-3"
        >
          <option value="">Choose an approved expert</option>
          {choices.map((e) => (
            <option key={e.userId} value={e.userId}>
              {e.name}
              {e.available ? "" : " (away)"}
            </option>
          ))}
        </select>
      </div>
      <ReasonField value={reason} onChange={setReason} hint="Kept in the case's history." />
    </TwoStep>
  );
}

function ReleaseAction({ w, onDone }: { w: WorkflowView; onDone: Done }) {
  const { release } = useAdminCaseActions(w.id);
  return (
    <TwoStep
      label="Put back in the queue…"
      title="Put the case back in the queue"
      ready
      review={
        `Take the case from ${w.expert?.name ?? "its expert"} and offer it to the queue again; ` + "the deadline stays."
      }
      confirmLabel="Yes, back to the queue"
      pending={release.isPending}
      error={release.error?.message}
      onConfirm={async () => {
        await release.mutateAsync();
        onDone("Done: the case is back in the queue.");
      }}
    >
      <p className="text-sm text-ink-700">
        Any approved expert can then claim it. The expert and the shop are told; the case's history records it.
      </p>
    </TwoStep>
  );
}

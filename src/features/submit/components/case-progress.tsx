import { useState } from "react";
import { Link } from "react-router-dom";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useWorkflow } from "../api/get-workflow";
import { useHistory } from "../api/get-history";
import { useShopCaseActions } from "../api/case-actions";
import type { AnswerView, Workflow } from "../api/types";
import { money, paymentWords, timeLeft, when } from "../lib/format";

const eventWords: Record<string, string> = {
  created: "Case opened",
  edited: "Draft edited",
  submitted: "Submitted for payment",
  payment_restarted: "New payment started",
  payment_failed: "Payment declined",
  payment_authorized: "Paid (held) — in the queue",
  payment_superseded: "Extra payment released",
  payment_captured: "Charged",
  payment_released: "Hold released",
  payment_refunded: "Refunded",
  offered: "Offered to matching experts",
  offers_widened: "Offered to all experts",
  claimed: "Claimed by an expert",
  released: "Handed back to the queue",
  data_requested: "More data requested",
  data_sent: "Data sent",
  data_uploaded: "New material uploaded",
  answered: "Answered",
  fix_confirmed: "Fix confirmed",
  not_fixed: "Not fixed — back to the expert",
  not_fixed_closed: "Not fixed — closed",
  closed_unconfirmed: "Closed (no confirmation)",
  deadline_missed: "Deadline missed — hold released",
  hold_lapsed: "Card hold ran out",
  hold_ending: "Closed before the card hold ran out",
  hold_cancelled: "Hold cancelled",
  refunded_by_desk: "Refunded by the desk",
  reassigned: "Handed to another expert by the desk",
  withdrawn: "Withdrawn",
  trace_added: "Trace added",
  trace_deleted: "Trace removed",
  photo_added: "Photo added",
  photo_deleted: "Photo removed",
};

/**
 * The case after submission, for everyone who may see it: where it stands and until when, the
 * expert's answers (with the safety note), the shop's confirmation form, the answer to a request
 * for more data, the payment's state and the history of who did what when.
 */
export function CaseProgress({ caseId }: { caseId: string }) {
  const wf = useWorkflow(caseId);
  if (!wf.data) return null;
  const w = wf.data;
  if (w.status === "draft" || (w.status === "awaiting_payment" && w.abilities.submit))
    return <CaseHistory caseId={caseId} />;
  return (
    <div className="space-y-5">
      <StatusCard w={w} />
      {w.answers.length ? <Answers answers={w.answers} /> : null}
      {w.abilities.confirm ? <ConfirmForm caseId={caseId} secondRound={w.notFixedCount > 0} /> : null}
      <CaseHistory caseId={caseId} />
    </div>
  );
}

function StatusCard({ w }: { w: Workflow }) {
  const actions = useShopCaseActions(w.id);
  const [note, setNote] = useState("");
  const left = timeLeft(w.deadlineAt);
  let headline: string;
  switch (w.status) {
    case "queued":
      headline = `Waiting for an expert to take it. Answer due ${when(w.deadlineAt)}${left ? ` (${left})` : ""}.`;
      break;
    case "claimed":
      headline = `${w.expert?.name ?? "An expert"} is working on it. Answer due ${when(w.deadlineAt)}${left ? ` (${left})` : ""}.`;
      break;
    case "needs_data":
      headline = `${w.expert?.name ?? "The expert"} needs more data. The deadline is paused until it arrives.`;
      break;
    case "answered":
      headline = "The answer is in. Try the fix, then tell us whether it worked.";
      break;
    case "resolved":
      headline = w.casebookEntryId
        ? "Fix confirmed, and published to the casebook (anonymised) so the next shop with this fault finds it."
        : "Fix confirmed. Thank you.";
      break;
    case "closed":
      headline = "Closed.";
      break;
    case "withdrawn":
      headline = "Withdrawn. Nothing was charged.";
      break;
    case "refunded":
      headline =
        w.payment?.status === "refunded"
          ? "Closed before an answer; the payment was refunded in full."
          : "Closed before an answer; the hold on the card was released and nothing was charged.";
      break;
    default:
      headline = "Waiting for the payment to be confirmed.";
  }
  return (
    <Card id="progress" title="Where the case stands">
      <div className="space-y-3">
        <p className="text-ink-800">{headline}</p>
        {w.casebookEntryId ? (
          <p>
            <Link to={`/casebook/${encodeURIComponent(w.casebookEntryId)}`} className={buttonClass.secondary}>
              See the casebook entry
            </Link>
          </p>
        ) : null}
        {w.status === "needs_data" && w.needsDataMessage ? (
          <Notice title="The expert asks">
            <p className="whitespace-pre-wrap">{w.needsDataMessage}</p>
          </Notice>
        ) : null}
        {w.abilities.dataSent ? (
          <form
            className="space-y-2"
            onSubmit={(e) => {
              e.preventDefault();
              actions.dataSent.mutate(note || undefined);
            }}
          >
            <label htmlFor={`sent-${w.id}`} className="block text-sm font-semibold text-ink-800">
              A note for the expert <span className="font-normal text-ink-500">(optional)</span>
            </label>
            <textarea
              id={`sent-${w.id}`}
              value={note}
              onChange={(e) => setNote(e.target.value)}
              rows={2}
              className="block w-full rounded-lg border border-ink-300 px-3 py-2"
            />
            <p className="text-sm text-ink-500">
              Uploading a new trace or photo also sends the case back to the expert.
            </p>
            <button type="submit" className={buttonClass.primary} disabled={actions.dataSent.isPending}>
              I have sent what was asked
            </button>
            {actions.dataSent.error ? (
              <p role="alert" className="text-sm font-semibold text-alarm-600">
                {actions.dataSent.error.message}
              </p>
            ) : null}
          </form>
        ) : null}
        {w.payment ? (
          <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-2">
            <div>
              <dt className="text-ink-500">Payment</dt>
              <dd className="font-semibold text-ink-900">
                {money(w.payment.amountCents, w.payment.currency)} · {w.payment.tierLabel}
              </dd>
            </div>
            <div>
              <dt className="text-ink-500">State</dt>
              <dd className="text-ink-900">{paymentWords[w.payment.status] ?? w.payment.status}</dd>
            </div>
            {w.payment.receiptNumber ? (
              <div>
                <dt className="text-ink-500">Receipt</dt>
                <dd className="text-ink-900">{w.payment.receiptNumber}</dd>
              </div>
            ) : null}
          </dl>
        ) : null}
      </div>
    </Card>
  );
}

export function Answers({ answers }: { answers: AnswerView[] }) {
  return (
    <Card id="answers" title={answers.length > 1 ? "The expert's answers" : "The expert's answer"}>
      <div className="space-y-5">
        {answers.map((a) => (
          <article key={a.id} className="space-y-2">
            <p className="text-sm text-ink-500">
              {a.round > 1 ? `Second answer` : "Answer"} by {a.expertName ?? "the expert"} · {when(a.createdAt)}
            </p>
            <dl className="space-y-2">
              {(
                [
                  ["Diagnosis", a.diagnosis],
                  ["Root cause", a.rootCause],
                  ["Recommended fix", a.recommendedFix],
                  ["Tests to confirm", a.testsToConfirm],
                ] as const
              ).map(([k, v]) => (
                <div key={k}>
                  <dt className="text-sm font-semibold text-ink-700">{k}</dt>
                  <dd className="whitespace-pre-wrap text-ink-900">{v}</dd>
                </div>
              ))}
            </dl>
            <p className="rounded-lg border border-kiln-300 bg-kiln-50 px-3 py-2 text-sm text-kiln-700">
              {a.safetyNote}
            </p>
          </article>
        ))}
      </div>
    </Card>
  );
}

function ConfirmForm({ caseId, secondRound }: { caseId: string; secondRound: boolean }) {
  const { confirm } = useShopCaseActions(caseId);
  const [fixed, setFixed] = useState<boolean | null>(null);
  const [note, setNote] = useState("");
  const [rating, setRating] = useState<number | null>(null);
  return (
    <Card id="confirm" title="Did the fix work?">
      <form
        className="space-y-3"
        onSubmit={(e) => {
          e.preventDefault();
          if (fixed === null) return;
          confirm.mutate({ fixed, note, ...(rating ? { rating } : {}) });
        }}
      >
        <div className="flex flex-wrap gap-3" role="radiogroup" aria-label="Fix result">
          {[
            [true, "Yes, it is fixed"],
            [false, secondRound ? "No — close the case" : "No, still not fixed"],
          ].map(([v, label]) => (
            <label
              key={String(v)}
              className={`flex min-h-11 cursor-pointer items-center gap-2 rounded-lg border px-4 ${fixed === v ? "border-kiln-500 bg-kiln-50" : "border-ink-300 bg-white"}`}
            >
              <input
                type="radio"
                name={`fixed-${caseId}`}
                checked={fixed === v}
                onChange={() => setFixed(v as boolean)}
                className="h-5 w-5 accent-kiln-500"
              />
              {label as string}
            </label>
          ))}
        </div>
        {fixed === false && !secondRound ? (
          <p className="text-sm text-ink-600">
            The case goes back to the same expert for a second answer, at no extra charge.
          </p>
        ) : null}
        <div>
          <label htmlFor={`note-${caseId}`} className="block text-sm font-semibold text-ink-800">
            What happened <span className="font-normal text-ink-500">(optional)</span>
          </label>
          <textarea
            id={`note-${caseId}`}
            value={note}
            onChange={(e) => setNote(e.target.value)}
            rows={3}
            className="mt-1 block w-full rounded-lg border border-ink-300 px-3 py-2"
          />
        </div>
        {fixed ? (
          <fieldset>
            <legend className="text-sm font-semibold text-ink-800">
              Rate the answer <span className="font-normal text-ink-500">(optional)</span>
            </legend>
            <div className="mt-1 flex gap-2">
              {[1, 2, 3, 4, 5].map((n) => (
                <button
                  key={n}
                  type="button"
                  aria-pressed={rating === n}
                  onClick={() => setRating(rating === n ? null : n)}
                  className={`h-11 w-11 rounded-lg border font-bold ${rating !== null && n <= rating ? "border-kiln-500 bg-kiln-100" : "border-ink-300 bg-white"}`}
                >
                  {n}
                </button>
              ))}
            </div>
          </fieldset>
        ) : null}
        <button type="submit" className={buttonClass.primary} disabled={fixed === null || confirm.isPending}>
          {confirm.isPending ? "Reporting…" : "Report the result"}
        </button>
        {confirm.error ? (
          <p role="alert" className="text-sm font-semibold text-alarm-600">
            {confirm.error.message}
          </p>
        ) : null}
      </form>
    </Card>
  );
}

/** Who did what when (collapsed by default). */
export function CaseHistory({ caseId }: { caseId: string }) {
  const [open, setOpen] = useState(false);
  const h = useHistory(caseId, open);
  return (
    <details
      className="rounded-xl border border-ink-200 bg-white p-4 shadow-sm"
      onToggle={(e) => setOpen((e.target as HTMLDetailsElement).open)}
    >
      <summary className="min-h-11 cursor-pointer py-2 font-bold text-ink-900">History</summary>
      {h.isPending && open ? <p className="text-sm text-ink-500">Loading…</p> : null}
      {h.data ? (
        <ol className="mt-2 space-y-1 text-sm">
          {h.data.items.map((e) => (
            <li key={e.id} className="flex flex-wrap gap-x-3">
              <span className="w-40 shrink-0 text-ink-500">{when(e.at)}</span>
              <span className="font-semibold text-ink-900">{eventWords[e.type] ?? e.type}</span>
              <span className="text-ink-600">
                {e.actorName ? `by ${e.actorName}${e.actorRole ? ` (${e.actorRole})` : ""}` : "by the desk"}
              </span>
            </li>
          ))}
        </ol>
      ) : null}
    </details>
  );
}

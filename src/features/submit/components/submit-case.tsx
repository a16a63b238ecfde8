import { useEffect, useId, useRef, useState } from "react";
import { useSearchParams } from "react-router-dom";
import { useQueryClient } from "@tanstack/react-query";
import type { CaseStatus } from "../../../../shared/domain/case-status";
import { api, ApiError } from "../../../lib/api-client";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useWorkflow } from "../api/get-workflow";
import { useSubmitCase } from "../api/submit-case";
import { useShopCaseActions } from "../api/case-actions";
import { submitPaths } from "../api/paths";
import type { Tier, Workflow } from "../api/types";
import { deadlineWindow as windowText, money } from "../lib/format";

export interface SubmitCaseProps {
  caseId: string;
  status: CaseStatus;
  /** the form's own readiness as typed (the case form); absent: the stored case's, as the server says */
  ready?: boolean;
  /** runs before paying, e.g. saving the form's unsaved changes; a rejection stops the payment */
  beforePay?: () => Promise<unknown>;
  /** after the draft was deleted */
  onDeleted?: () => void;
}

/**
 * The submit step of a case: choose a tier (price and answer deadline shown before paying), then
 * one pay action — to a new checkout, or back to the one already open for the same tier. Back from
 * checkout (`?paid=1`) it polls until the payment is confirmed and the case is in the queue. Shows a
 * declined card's message; a draft can be deleted, a submitted case withdrawn before an expert
 * takes it.
 */
export function SubmitCase({ caseId, status, ready, beforePay, onDeleted }: SubmitCaseProps) {
  const [params] = useSearchParams();
  const waitingForPayment = params.get("paid") === "1";
  const wf = useWorkflow(caseId, waitingForPayment ? 1500 : undefined);
  const current = wf.data?.status ?? status;
  const confirmed = current !== "draft" && current !== "awaiting_payment";
  usePaymentReturn(caseId, confirmed);

  if (!wf.data) {
    if (wf.isError)
      return (
        <Notice tone="error" title="Could not load the payment step">
          {wf.error.message}
        </Notice>
      );
    return (
      <div
        className="h-24 animate-pulse rounded-xl bg-ink-100"
        aria-busy="true"
        aria-label="Loading the payment step"
      />
    );
  }
  const w = wf.data;
  if (confirmed) {
    return (
      <div className="space-y-3">
        {params.get("queued") === "1" && current === "queued" ? (
          <Notice tone="success" title="Payment confirmed: your case is in the queue">
            The amount is held on your card and charged only when an expert delivers the answer.
          </Notice>
        ) : null}
        {w.abilities.withdraw ? <Withdraw caseId={caseId} /> : null}
      </div>
    );
  }
  if (!w.abilities.submit && !w.abilities.deleteDraft) return null;
  return (
    <Card id="submit" title="Send to the desk">
      <PayStep w={w} ready={ready} beforePay={beforePay} waitingForPayment={waitingForPayment} />
      <div className="mt-4 flex flex-wrap gap-3 border-t border-ink-100 pt-4">
        {w.abilities.deleteDraft ? <DeleteDraft caseId={caseId} onDeleted={onDeleted} /> : null}
        {w.abilities.withdraw && current !== "draft" ? <Withdraw caseId={caseId} quiet /> : null}
      </div>
    </Card>
  );
}

/**
 * Back from checkout: stop polling once confirmed (or after 90 s); ask the payment service once if
 * the webhook is slow.
 */
function usePaymentReturn(caseId: string, confirmed: boolean) {
  const [params, setParams] = useSearchParams();
  const waiting = params.get("paid") === "1";
  const [pollUntil] = useState(() => (waiting ? Date.now() + 90_000 : 0));
  const synced = useRef(false);
  const qc = useQueryClient();
  useEffect(() => {
    if (!waiting) return;
    if (confirmed || Date.now() > pollUntil) {
      const next = new URLSearchParams(params);
      next.delete("paid");
      next.delete("session_id");
      if (confirmed) next.set("queued", "1");
      setParams(next, { replace: true });
      return;
    }
    const t = setTimeout(async () => {
      if (synced.current) return;
      synced.current = true;
      await api.get(submitPaths.payment(caseId, true)).catch(() => undefined);
      await qc.invalidateQueries({ queryKey: ["cases"] });
    }, 8000);
    return () => clearTimeout(t);
  }, [waiting, confirmed, pollUntil, params, setParams, caseId, qc]);
}

function PayStep({
  w,
  ready,
  beforePay,
  waitingForPayment,
}: {
  w: Workflow;
  ready?: boolean;
  beforePay?: () => Promise<unknown>;
  waitingForPayment: boolean;
}) {
  const [params] = useSearchParams();
  const submit = useSubmitCase(w.id);
  const [tier, setTier] = useState<string | null>(null);
  const [preparing, setPreparing] = useState(false);
  const tiers = w.pricing?.tiers ?? [];
  const currency = w.pricing?.currency ?? "usd";
  const chosen = tiers.find((t) => t.id === (tier ?? w.payment?.tier ?? tiers[0]?.id)) ?? tiers[0];
  // the checkout already open for this tier is the one pay action (not a second button beside a new one)
  const open = w.payment?.status === "pending" && w.payment.checkoutUrl && !w.paymentMessage ? w.payment : null;
  const resume = open && chosen && open.tier === chosen.id ? open.checkoutUrl : null;
  const blocked = ready === false || !w.abilities.submit;
  const busy = preparing || submit.isPending || submit.isSuccess;
  const submitError = submit.error instanceof ApiError ? submit.error : null;

  const pay = async () => {
    if (!chosen || blocked) return;
    setPreparing(true);
    try {
      await beforePay?.();
    } catch {
      setPreparing(false);
      return;
    }
    if (resume) {
      globalThis.location.assign(resume);
      return;
    }
    // mutateAsync: the answer is used even when this step has unmounted meanwhile (the draft page
    // turns into the case's page as soon as the case has left the draft stage)
    try {
      const r = await submit.mutateAsync({ tier: chosen.id });
      globalThis.location.assign(r.checkoutUrl);
    } catch {
      setPreparing(false);
    }
  };

  return (
    <div className="space-y-4">
      {waitingForPayment ? (
        <Notice title="Confirming your payment…">This takes a few seconds. The page updates by itself.</Notice>
      ) : null}
      {params.get("paid") === "0" && !w.paymentMessage ? (
        <Notice title="Payment cancelled">Nothing was charged. Choose a tier and pay when you are ready.</Notice>
      ) : null}
      {w.paymentMessage && !waitingForPayment ? (
        <Notice tone="error" title="The payment did not go through">
          {w.paymentMessage}
        </Notice>
      ) : null}
      <TierChoice caseId={w.id} tiers={tiers} currency={currency} chosen={chosen} onChoose={setTier} />
      <p className="text-sm text-ink-600">
        Your card is authorised now and charged only when the expert delivers the answer. If the desk misses the
        deadline, or you withdraw the case before an expert takes it, the hold is released and nothing is charged.
      </p>
      {submitError ? (
        <Notice tone="error" title="Could not start the payment">
          {submitError.message}
        </Notice>
      ) : null}
      <button
        type="button"
        className={buttonClass.primary}
        onClick={() => void pay()}
        disabled={!chosen || busy || blocked}
      >
        {busy
          ? "Opening checkout…"
          : !chosen
            ? "No tier available"
            : ready === false
              ? "Fill in what the desk needs first"
              : resume
                ? `Pay ${money(chosen.priceCents, currency)}`
                : `Pay ${money(chosen.priceCents, currency)} and submit`}
      </button>
      {resume ? (
        <p className="text-sm text-ink-500">Your checkout for this tier is still open: paying goes back to it.</p>
      ) : null}
    </div>
  );
}

const tierOn = "border-kiln-500 bg-kiln-50 ring-2 ring-kiln-300";
const tierOff = "border-ink-200 bg-white hover:bg-ink-50";

function TierChoice({
  caseId,
  tiers,
  currency,
  chosen,
  onChoose,
}: {
  caseId: string;
  tiers: Tier[];
  currency: string;
  chosen?: Tier;
  onChoose: (id: string) => void;
}) {
  const groupId = useId();
  return (
    <fieldset>
      <legend id={groupId} className="mb-2 text-sm font-semibold text-ink-800">
        How fast do you need the answer?
      </legend>
      <div className="grid gap-3 sm:grid-cols-2">
        {tiers.map((t) => {
          const on = chosen?.id === t.id;
          return (
            <label
              key={t.id}
              className={`flex min-h-11 cursor-pointer gap-3 rounded-xl border p-4 ${on ? tierOn : tierOff}`}
            >
              <input
                type="radio"
                name={`tier-${caseId}`}
                value={t.id}
                checked={on}
                onChange={() => onChoose(t.id)}
                className="mt-1 h-5 w-5 accent-kiln-500"
              />
              <span className="min-w-0">
                <span className="flex flex-wrap items-baseline gap-x-2">
                  <span className="font-bold text-ink-900">{t.label}</span>
                  <span className="text-lg font-bold text-ink-900">{money(t.priceCents, currency)}</span>
                </span>
                <span className="block text-sm text-ink-700">
                  Answer within {windowText(t.deadlineMinutes)} of payment
                </span>
                {t.description ? <span className="block text-sm text-ink-500">{t.description}</span> : null}
              </span>
            </label>
          );
        })}
      </div>
    </fieldset>
  );
}

/** Two steps: the button, then "Delete this draft for good?" with the answer beside it. */
function DeleteDraft({ caseId, onDeleted }: { caseId: string; onDeleted?: () => void }) {
  const { deleteDraft } = useShopCaseActions(caseId);
  const [asking, setAsking] = useState(false);
  if (!asking) {
    return (
      <button type="button" className={buttonClass.quiet} onClick={() => setAsking(true)}>
        Delete draft
      </button>
    );
  }
  return (
    <div
      role="group"
      aria-label="Delete the draft"
      className="w-full space-y-2 rounded-lg border border-alarm-500 bg-white p-3"
    >
      <p className="text-sm font-semibold text-ink-900">
        Delete this draft for good? Its captures and photos go with it. Nothing has been paid.
      </p>
      <div className="flex flex-wrap gap-2">
        <button
          type="button"
          className={buttonClass.danger}
          disabled={deleteDraft.isPending}
          onClick={() => deleteDraft.mutate(undefined, { onSuccess: () => onDeleted?.() })}
        >
          {deleteDraft.isPending ? "Deleting…" : "Yes, delete the draft"}
        </button>
        <button type="button" className={buttonClass.secondary} onClick={() => setAsking(false)}>
          Keep it
        </button>
      </div>
      {deleteDraft.error ? (
        <p role="alert" className="text-sm font-semibold text-alarm-600">
          {deleteDraft.error.message}
        </p>
      ) : null}
    </div>
  );
}

function Withdraw({ caseId, quiet }: { caseId: string; quiet?: boolean }) {
  const { withdraw } = useShopCaseActions(caseId);
  const [asking, setAsking] = useState(false);
  return (
    <div>
      {asking ? (
        <div
          role="group"
          aria-label="Withdraw the case"
          className="space-y-2 rounded-lg border border-alarm-500 bg-white p-3"
        >
          <p className="text-sm font-semibold text-ink-900">
            Withdraw this case? Any hold on your card is released and nothing is charged.
          </p>
          <div className="flex flex-wrap gap-2">
            <button
              type="button"
              className={buttonClass.danger}
              disabled={withdraw.isPending}
              onClick={() => withdraw.mutate()}
            >
              {withdraw.isPending ? "Withdrawing…" : "Yes, withdraw it"}
            </button>
            <button type="button" className={buttonClass.secondary} onClick={() => setAsking(false)}>
              Keep it
            </button>
          </div>
        </div>
      ) : (
        <button
          type="button"
          className={quiet ? buttonClass.quiet : buttonClass.danger}
          onClick={() => setAsking(true)}
        >
          Withdraw the case
        </button>
      )}
      {withdraw.error ? (
        <p role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
          {withdraw.error.message}
        </p>
      ) : null}
    </div>
  );
}

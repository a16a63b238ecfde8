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
import { deadlineWindow as windowText, money } from "../lib/format";

/**
 * The submit step of a case: choose a tier (price and answer deadline shown before paying), then
 * go to the checkout page. Back from checkout (`?paid=1`) it polls until the payment is confirmed
 * and the case is in the queue. Shows a declined card's message, and offers withdrawal before an
 * expert claims the case.
 */
export function SubmitCase({ caseId, status }: { caseId: string; status: CaseStatus }) {
  const [params, setParams] = useSearchParams();
  const returning = params.get("paid");
  const waitingForPayment = returning === "1";
  const [pollUntil] = useState(() => (waitingForPayment ? Date.now() + 90_000 : 0));
  const wf = useWorkflow(caseId, waitingForPayment ? 1500 : undefined);
  const qc = useQueryClient();
  const submit = useSubmitCase(caseId);
  const actions = useShopCaseActions(caseId);
  const [tier, setTier] = useState<string | null>(null);
  const synced = useRef(false);
  const groupId = useId();

  const current = wf.data?.status ?? status;
  const confirmed = current !== "draft" && current !== "awaiting_payment";

  // Stop polling once confirmed (or after 90 s); ask Stripe directly once if the webhook is slow.
  useEffect(() => {
    if (!waitingForPayment) return;
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
  }, [waitingForPayment, confirmed, pollUntil, params, setParams, caseId, qc]);

  if (!wf.data) {
    if (wf.isError) return <Notice tone="error" title="Could not load the payment step">{wf.error.message}</Notice>;
    return <div className="h-24 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading the payment step" />;
  }
  const w = wf.data;
  const can = w.abilities;

  if (confirmed) {
    return (
      <div className="space-y-3">
        {params.get("queued") === "1" && current === "queued" ? (
          <Notice tone="success" title="Payment confirmed: your case is in the queue">
            The amount is held on your card and charged only when an expert delivers the answer.
          </Notice>
        ) : null}
        {can.withdraw ? <WithdrawButton onWithdraw={() => actions.withdraw.mutate()} pending={actions.withdraw.isPending} error={actions.withdraw.error?.message} /> : null}
      </div>
    );
  }

  if (!can.submit) return null;
  const tiers = w.pricing?.tiers ?? [];
  const currency = w.pricing?.currency ?? "usd";
  const chosen = tiers.find((t) => t.id === (tier ?? w.payment?.tier ?? tiers[0]?.id)) ?? tiers[0];
  const submitError = submit.error instanceof ApiError ? submit.error : null;

  const start = () => {
    if (!chosen) return;
    submit.mutate(
      { tier: chosen.id },
      {
        onSuccess: (r) => {
          globalThis.location.assign(r.checkoutUrl);
        },
      },
    );
  };

  return (
    <Card id="submit" title="Send to the desk">
      <div className="space-y-4">
        {waitingForPayment ? (
          <Notice title="Confirming your payment…">This takes a few seconds. The page updates by itself.</Notice>
        ) : null}
        {returning === "0" && !w.paymentMessage ? <Notice title="Payment cancelled">Nothing was charged. Choose a tier and pay when you are ready.</Notice> : null}
        {w.paymentMessage && !waitingForPayment ? <Notice tone="error" title="The payment did not go through">{w.paymentMessage}</Notice> : null}

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
                  className={`flex min-h-11 cursor-pointer gap-3 rounded-xl border p-4 ${on ? "border-kiln-500 bg-kiln-50 ring-2 ring-kiln-300" : "border-ink-200 bg-white hover:bg-ink-50"}`}
                >
                  <input type="radio" name={`tier-${caseId}`} value={t.id} checked={on} onChange={() => setTier(t.id)} className="mt-1 h-5 w-5 accent-kiln-500" />
                  <span className="min-w-0">
                    <span className="flex flex-wrap items-baseline gap-x-2">
                      <span className="font-bold text-ink-900">{t.label}</span>
                      <span className="text-lg font-bold text-ink-900">{money(t.priceCents, currency)}</span>
                    </span>
                    <span className="block text-sm text-ink-700">Answer within {windowText(t.deadlineMinutes)} of payment</span>
                    {t.description ? <span className="block text-sm text-ink-500">{t.description}</span> : null}
                  </span>
                </label>
              );
            })}
          </div>
        </fieldset>

        <p className="text-sm text-ink-600">
          Your card is authorised now and charged only when the expert delivers the answer. If the desk misses the deadline, or you withdraw
          the case before an expert takes it, the hold is released and nothing is charged.
        </p>

        {submitError ? (
          <Notice tone="error" title="Could not start the payment">
            {submitError.message}
          </Notice>
        ) : null}

        <div className="flex flex-wrap gap-3">
          <button type="button" className={buttonClass.primary} onClick={start} disabled={!chosen || submit.isPending || submit.isSuccess}>
            {submit.isPending || submit.isSuccess ? "Opening checkout…" : chosen ? `Pay ${money(chosen.priceCents, currency)} and submit` : "No tier available"}
          </button>
          {w.payment?.checkoutUrl && w.payment.status === "pending" && !w.paymentMessage ? (
            <a className={buttonClass.secondary} href={w.payment.checkoutUrl}>
              Continue to the open checkout
            </a>
          ) : null}
          {can.withdraw ? <WithdrawButton onWithdraw={() => actions.withdraw.mutate()} pending={actions.withdraw.isPending} error={actions.withdraw.error?.message} quiet /> : null}
        </div>
      </div>
    </Card>
  );
}

function WithdrawButton({ onWithdraw, pending, error, quiet }: { onWithdraw: () => void; pending: boolean; error?: string; quiet?: boolean }) {
  return (
    <div>
      <button
        type="button"
        className={quiet ? buttonClass.quiet : buttonClass.danger}
        disabled={pending}
        onClick={() => {
          if (confirm("Withdraw this case? Any hold on your card is released and nothing is charged.")) onWithdraw();
        }}
      >
        {pending ? "Withdrawing…" : "Withdraw the case"}
      </button>
      {error ? (
        <p role="alert" className="mt-1 text-sm font-semibold text-alarm-600">
          {error}
        </p>
      ) : null}
    </div>
  );
}

import { Link } from "react-router-dom";
import { formatDate, formatMoney } from "../../../../shared/format";
import { Card, Notice } from "../../../components/ui/form";
import { LoadingBlock, MoneyTotals } from "../../../components/ui/money-totals";
import { billingPages, useBilling, type BillingPayment } from "../api/get-billing";

/** A payment's state in the shop's words (one label per state, the same on the case page). */
export const paymentStateWords: Record<string, string> = {
  authorized: "Held on the card",
  captured: "Charged",
  released: "Hold released, nothing charged",
  refunded: "Refunded",
  failed: "Declined",
};

const when = (p: BillingPayment) => formatDate(p.refundedAt ?? p.capturedAt ?? p.authorizedAt ?? p.createdAt);

function Receipt({ p }: { p: BillingPayment }) {
  return p.receiptNumber ? (
    <Link className="underline" to={billingPages.receipt(p.id)}>
      {p.receiptNumber}
    </Link>
  ) : (
    <span className="text-ink-500">no receipt (nothing charged)</span>
  );
}

/** Tablets and desks: one row per payment. */
function PaymentsTable({ payments }: { payments: BillingPayment[] }) {
  return (
    <table className="hidden w-full text-left text-sm md:table">
      <caption className="sr-only">Payments, newest first</caption>
      <thead>
        <tr className="border-b border-ink-200 text-ink-500">
          <th scope="col" className="py-2 pr-3 font-semibold">
            Date
          </th>
          <th scope="col" className="py-2 pr-3 font-semibold">
            Case
          </th>
          <th scope="col" className="py-2 pr-3 font-semibold">
            Tier
          </th>
          <th scope="col" className="py-2 pr-3 text-right font-semibold">
            Amount
          </th>
          <th scope="col" className="py-2 pr-3 font-semibold">
            State
          </th>
          <th scope="col" className="py-2 font-semibold">
            Receipt
          </th>
        </tr>
      </thead>
      <tbody>
        {payments.map((p) => (
          <tr key={p.id} className="border-b border-ink-100 align-top">
            <td className="whitespace-nowrap py-2 pr-3">{when(p)}</td>
            <td className="py-2 pr-3">
              <Link className="underline" to={billingPages.caseOf(p.caseId)}>
                {p.caseLabel}
              </Link>
            </td>
            <td className="py-2 pr-3">{p.tierLabel}</td>
            <td className="py-2 pr-3 text-right tabular-nums">{formatMoney(p.amountCents, p.currency)}</td>
            <td className="py-2 pr-3">{paymentStateWords[p.status] ?? p.status}</td>
            <td className="py-2">
              <Receipt p={p} />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Phones: a card per payment, with the amount, the state and the receipt always in view. */
function PaymentCards({ payments }: { payments: BillingPayment[] }) {
  return (
    <ul className="space-y-3 md:hidden" aria-label="Payments, newest first">
      {payments.map((p) => (
        <li key={p.id} className="rounded-lg border border-ink-200 p-3">
          <div className="flex items-baseline justify-between gap-3">
            <Link className="min-w-0 font-semibold underline" to={billingPages.caseOf(p.caseId)}>
              {p.caseLabel}
            </Link>
            <span className="shrink-0 text-lg font-bold tabular-nums">{formatMoney(p.amountCents, p.currency)}</span>
          </div>
          <p className="text-sm text-ink-700">
            {paymentStateWords[p.status] ?? p.status} · {p.tierLabel} · {when(p)}
          </p>
          <p className="mt-1 text-sm">
            Receipt: <Receipt p={p} />
          </p>
        </li>
      ))}
    </ul>
  );
}

/** A shop's billing: totals and every payment with its receipt (owners: their own; admins: `shopId`). */
export function BillingView({ shopId }: { shopId?: string }) {
  const q = useBilling(shopId);
  if (q.isPending) return <LoadingBlock label="Loading billing" />;
  if (q.isError)
    return (
      <Notice tone="error" title="Billing is not available">
        {q.error.message}
      </Notice>
    );
  const b = q.data;
  return (
    <div className="space-y-5">
      <MoneyTotals
        currency={b.currency}
        items={[
          ["Charged", b.totals.chargedCents],
          ["Held now", b.totals.heldCents],
          ["Refunded", b.totals.refundedCents],
        ]}
      />
      <p className="text-sm text-ink-600">
        A payment is held on the card when a case is submitted and charged only when the expert answers; a missed
        deadline, a withdrawal or a refund by the desk releases it. Prices include tax; each receipt shows it.
      </p>
      <Card title="Payments">
        {b.payments.length === 0 ? (
          <p className="text-ink-600">
            No payments yet. A payment appears here when one of the shop&apos;s cases is sent to the desk; it is charged
            only when the expert answers.
          </p>
        ) : (
          <>
            <PaymentsTable payments={b.payments} />
            <PaymentCards payments={b.payments} />
          </>
        )}
      </Card>
    </div>
  );
}

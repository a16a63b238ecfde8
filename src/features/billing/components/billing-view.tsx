import { Link } from "react-router-dom";
import { formatCents } from "../../../../shared/domain/money";
import { Card, Notice } from "../../../components/ui/form";
import { LoadingBlock, MoneyTotals } from "../../../components/ui/money-totals";
import { billingPages, useBilling } from "../api/get-billing";

const words: Record<string, string> = {
  authorized: "Held",
  captured: "Charged",
  released: "Released",
  refunded: "Refunded",
  failed: "Declined",
};
const date = (iso: string | null) => (iso ? new Date(iso).toLocaleDateString(undefined, { dateStyle: "medium" }) : "—");

/** The owner's billing: totals and every payment with its receipt. */
export function BillingView() {
  const q = useBilling();
  if (q.isPending) return <LoadingBlock label="Loading billing" />;
  if (q.isError) return <Notice tone="error" title="Billing is not available">{q.error.message}</Notice>;
  const b = q.data;
  const m = (c: number) => formatCents(c, b.currency.toUpperCase());
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
      <p className="text-sm text-ink-600">A payment is held on the card when a case is submitted and charged only when the expert answers; a missed deadline or a withdrawal releases it.</p>
      <Card title="Payments">
        {b.payments.length === 0 ? (
          <p className="text-ink-600">No payments yet. A payment appears here when one of the shop's cases is sent to the desk; it is charged only when the expert answers.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm">
              <thead>
                <tr className="border-b border-ink-200 text-ink-500">
                  <th className="py-2 pr-3 font-semibold">Date</th>
                  <th className="py-2 pr-3 font-semibold">Case</th>
                  <th className="py-2 pr-3 font-semibold">Tier</th>
                  <th className="py-2 pr-3 text-right font-semibold">Amount</th>
                  <th className="py-2 pr-3 font-semibold">State</th>
                  <th className="py-2 font-semibold">Receipt</th>
                </tr>
              </thead>
              <tbody>
                {b.payments.map((p) => (
                  <tr key={p.id} className="border-b border-ink-100 align-top">
                    <td className="py-2 pr-3 whitespace-nowrap">{date(p.capturedAt ?? p.authorizedAt ?? p.createdAt)}</td>
                    <td className="py-2 pr-3">
                      <Link className="underline" to={billingPages.caseOf(p.caseId)}>
                        {p.caseLabel}
                      </Link>
                    </td>
                    <td className="py-2 pr-3">{p.tierLabel}</td>
                    <td className="py-2 pr-3 text-right tabular-nums">{m(p.amountCents)}</td>
                    <td className="py-2 pr-3">{words[p.status] ?? p.status}</td>
                    <td className="py-2">
                      {p.receiptNumber ? (
                        <Link className="underline" to={billingPages.receipt(p.id)}>
                          {p.receiptNumber}
                        </Link>
                      ) : (
                        "—"
                      )}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Card>
    </div>
  );
}

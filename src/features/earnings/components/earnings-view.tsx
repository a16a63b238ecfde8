import { Link } from "react-router-dom";
import { formatCents } from "../../../../shared/domain/money";
import { Card, Notice } from "../../../components/ui/form";
import { LoadingBlock, MoneyTotals } from "../../../components/ui/money-totals";
import { useEarnings } from "../api/get-earnings";

const date = (iso: string | null) => (iso ? new Date(iso).toLocaleDateString(undefined, { dateStyle: "medium" }) : "—");

/** The expert's earnings: totals, each answered case's split, and payouts. */
export function EarningsView() {
  const q = useEarnings();
  if (q.isPending) return <LoadingBlock label="Loading earnings" />;
  if (q.isError) return <Notice tone="error" title="Earnings are not available">{q.error.message}</Notice>;
  const e = q.data;
  const m = (c: number) => formatCents(c, e.currency.toUpperCase());
  return (
    <div className="space-y-5">
      <MoneyTotals
        currency={e.currency}
        items={[
          ["Earned", e.totals.earnedCents - e.totals.reversedCents],
          ["Paid out", e.totals.paidCents],
          ["Not paid out yet", e.totals.unpaidCents + e.totals.pendingPayoutCents],
        ]}
      />
      <Card title="Answered cases">
        {e.cases.length === 0 ? (
          <p className="text-ink-600">No earnings yet. Your share is added when the shop's payment is charged, at your answer.</p>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full text-left text-sm">
              <thead>
                <tr className="border-b border-ink-200 text-ink-500">
                  <th className="py-2 pr-3 font-semibold">Charged</th>
                  <th className="py-2 pr-3 font-semibold">Case</th>
                  <th className="py-2 pr-3 text-right font-semibold">Paid by the shop</th>
                  <th className="py-2 pr-3 text-right font-semibold">Desk</th>
                  <th className="py-2 text-right font-semibold">You</th>
                </tr>
              </thead>
              <tbody>
                {e.cases.map((c) => (
                  <tr key={c.caseId} className="border-b border-ink-100">
                    <td className="py-2 pr-3 whitespace-nowrap">{date(c.capturedAt)}</td>
                    <td className="py-2 pr-3">
                      <Link className="underline" to={`/cases/${encodeURIComponent(c.caseId)}`}>
                        {c.label}
                      </Link>
                    </td>
                    <td className="py-2 pr-3 text-right tabular-nums">{m(c.grossCents)}</td>
                    <td className="py-2 pr-3 text-right tabular-nums">{m(c.deskCents)}</td>
                    <td className="py-2 text-right font-semibold tabular-nums">
                      {m(c.expertCents - c.reversedCents)}
                      {c.reversedCents ? <span className="block text-xs font-normal text-ink-500">refunded {m(c.reversedCents)}</span> : null}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        )}
      </Card>
      <Card title="Payouts">
        {e.payouts.length === 0 ? (
          <p className="text-ink-600">No payouts yet. The desk pays out unpaid earnings to your payout account daily.</p>
        ) : (
          <ul className="divide-y divide-ink-100">
            {e.payouts.map((p) => (
              <li key={p.id} className="flex flex-wrap justify-between gap-2 py-2 text-sm">
                <span>{date(p.paidAt ?? p.createdAt)}</span>
                <span className="font-semibold tabular-nums">{formatCents(p.amountCents, p.currency.toUpperCase())}</span>
                <span className={p.status === "failed" ? "text-alarm-600" : "text-ink-700"}>
                  {p.status === "paid" ? `Sent (${p.transferId})` : p.status === "pending" ? "On its way" : `Failed: ${p.failureMessage ?? ""}`}
                </span>
              </li>
            ))}
          </ul>
        )}
      </Card>
    </div>
  );
}

import { Link } from "react-router-dom";
import { formatDate, formatMoney } from "../../../../shared/format";
import type { EarningCaseView } from "../../../../shared/views/money";
import { Card, Notice } from "../../../components/ui/form";
import { LoadingBlock, MoneyTotals } from "../../../components/ui/money-totals";
import { useEarnings } from "../api/get-earnings";

const date = (iso: string | null) => formatDate(iso);
type Money = (cents: number) => string;

/** Tablets and desks: one row per answered case. */
function EarningsTable({ cases, m }: { cases: EarningCaseView[]; m: Money }) {
  return (
    <table className="hidden w-full text-left text-sm md:table">
      <caption className="sr-only">Answered cases and your share of each</caption>
      <thead>
        <tr className="border-b border-ink-200 text-ink-500">
          <th scope="col" className="py-2 pr-3 font-semibold">
            Charged
          </th>
          <th scope="col" className="py-2 pr-3 font-semibold">
            Case
          </th>
          <th scope="col" className="py-2 pr-3 text-right font-semibold">
            Paid by the shop
          </th>
          <th scope="col" className="py-2 pr-3 text-right font-semibold">
            Desk
          </th>
          <th scope="col" className="py-2 text-right font-semibold">
            You
          </th>
        </tr>
      </thead>
      <tbody>
        {cases.map((c) => (
          <tr key={c.caseId} className="border-b border-ink-100">
            <td className="whitespace-nowrap py-2 pr-3">{date(c.capturedAt)}</td>
            <td className="py-2 pr-3">
              <Link className="underline" to={`/cases/${encodeURIComponent(c.caseId)}`}>
                {c.label}
              </Link>
            </td>
            <td className="py-2 pr-3 text-right tabular-nums">{m(c.grossCents)}</td>
            <td className="py-2 pr-3 text-right tabular-nums">{m(c.deskCents)}</td>
            <td className="py-2 text-right font-semibold tabular-nums">
              {m(c.expertCents - c.reversedCents)}
              {c.reversedCents ? (
                <span className="block text-xs font-normal text-ink-500">refunded {m(c.reversedCents)}</span>
              ) : null}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Phones: a card per case with your share in view first. */
function EarningsCards({ cases, m }: { cases: EarningCaseView[]; m: Money }) {
  return (
    <ul className="space-y-3 md:hidden" aria-label="Answered cases and your share of each">
      {cases.map((c) => (
        <li key={c.caseId} className="rounded-lg border border-ink-200 p-3">
          <div className="flex items-baseline justify-between gap-3">
            <Link className="min-w-0 font-semibold underline" to={`/cases/${encodeURIComponent(c.caseId)}`}>
              {c.label}
            </Link>
            <span className="shrink-0 text-right">
              <span className="block text-xs text-ink-500">You</span>
              <span className="text-lg font-bold tabular-nums">{m(c.expertCents - c.reversedCents)}</span>
            </span>
          </div>
          <p className="text-sm text-ink-700">
            Charged {date(c.capturedAt)} · shop paid {m(c.grossCents)} · desk {m(c.deskCents)}
            {c.reversedCents ? ` · refunded ${m(c.reversedCents)}` : ""}
          </p>
        </li>
      ))}
    </ul>
  );
}

/** The expert's earnings: totals, each answered case's split, and payouts. */
export function EarningsView() {
  const q = useEarnings();
  if (q.isPending) return <LoadingBlock label="Loading earnings" />;
  if (q.isError)
    return (
      <Notice tone="error" title="Earnings are not available">
        {q.error.message}
      </Notice>
    );
  const e = q.data;
  const m = (c: number) => formatMoney(c, e.currency);
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
          <p className="text-ink-600">
            No earnings yet. Your share is added when the shop's payment is charged, at your answer.
          </p>
        ) : (
          <>
            <EarningsTable cases={e.cases} m={m} />
            <EarningsCards cases={e.cases} m={m} />
          </>
        )}
      </Card>
      <Card title="Payouts">
        {e.payouts.length === 0 ? (
          <p className="text-ink-600">
            No payouts yet. The desk pays out unpaid earnings to your payout account daily.
          </p>
        ) : (
          <ul className="divide-y divide-ink-100">
            {e.payouts.map((p) => (
              <li key={p.id} className="flex flex-wrap justify-between gap-2 py-2 text-sm">
                <span>{date(p.paidAt ?? p.createdAt)}</span>
                <span className="font-semibold tabular-nums">{formatMoney(p.amountCents, p.currency)}</span>
                <span className={p.status === "failed" ? "text-alarm-600" : "text-ink-700"}>
                  {p.status === "paid"
                    ? `Sent (${p.transferId})`
                    : p.status === "pending"
                      ? "On its way"
                      : `Failed: ${p.failureMessage ?? ""}`}
                </span>
              </li>
            ))}
          </ul>
        )}
      </Card>
    </div>
  );
}

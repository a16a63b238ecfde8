import { formatCents } from "../../../../shared/domain/money";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { usePayoutOverview, useRunPayouts } from "../api/payouts";

/** Admin: each expert's unpaid earnings, and a button that pays them out (transfers). */
export function PayoutsAdmin({ currency = "usd" }: { currency?: string }) {
  const q = usePayoutOverview();
  const run = useRunPayouts();
  const m = (c: number) => formatCents(c, currency.toUpperCase());
  return (
    <Card
      title="Payouts to experts"
      actions={
        <button
          type="button"
          className={buttonClass.primary}
          disabled={run.isPending}
          onClick={() => run.mutate(undefined)}
        >
          {run.isPending ? "Paying out…" : "Pay out everything owed"}
        </button>
      }
    >
      {run.data ? (
        <Notice tone="success">
          {run.data.payouts.length ? `${run.data.payouts.length} payout(s) made.` : "Nothing was owed."}
        </Notice>
      ) : null}
      {run.error ? <Notice tone="error">{run.error.message}</Notice> : null}
      {q.data ? (
        q.data.experts.length === 0 ? (
          <p className="text-ink-600">No expert has earnings yet.</p>
        ) : (
          <ul className="mt-3 divide-y divide-ink-100">
            {q.data.experts.map((e) => (
              <li key={e.expertId} className="flex flex-wrap items-center justify-between gap-2 py-2 text-sm">
                <span className="font-semibold">{e.name}</span>
                <span>
                  owed <strong className="tabular-nums">{m(e.unpaidCents)}</strong> · paid {m(e.paidCents)}
                </span>
              </li>
            ))}
          </ul>
        )
      ) : null}
    </Card>
  );
}

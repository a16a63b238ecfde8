import { formatMoney } from "../../../shared/format";
import { Card } from "./form";

/** A row of labelled money figures (integer cents), as on the billing and earnings pages. */
export function MoneyTotals({ items, currency }: { items: [label: string, cents: number][]; currency: string }) {
  return (
    <div className="grid gap-3 sm:grid-cols-3">
      {items.map(([label, cents]) => (
        <Card key={label}>
          <p className="text-sm text-ink-500">{label}</p>
          <p className="text-2xl font-bold text-ink-900">{formatMoney(cents, currency)}</p>
        </Card>
      ))}
    </div>
  );
}

/** The placeholder shown while a page's figures load. */
export function LoadingBlock({ label }: { label: string }) {
  return <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label={label} />;
}

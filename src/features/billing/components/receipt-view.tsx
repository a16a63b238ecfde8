import { formatCents } from "../../../../shared/domain/money";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useReceipt } from "../api/get-receipt";

const date = (iso: string | null) => (iso ? new Date(iso).toLocaleString(undefined, { dateStyle: "long", timeStyle: "short" }) : "—");

/** One printable receipt. */
export function ReceiptView({ paymentId }: { paymentId: string }) {
  const q = useReceipt(paymentId);
  if (q.isPending) return <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading the receipt" />;
  if (q.isError) return <Notice tone="error" title="No such receipt">{q.error.message}</Notice>;
  const r = q.data;
  const m = (c: number) => formatCents(c, r.currency.toUpperCase());
  return (
    <Card title={`Receipt ${r.receiptNumber}`} actions={<button type="button" className={`${buttonClass.secondary} no-print`} onClick={() => globalThis.print()}>Print</button>}>
      <dl className="grid gap-x-8 gap-y-2 sm:grid-cols-2">
        {(
          [
            ["Billed to", r.shopName],
            ["Case", r.caseLabel],
            ["Service", `${r.tierLabel} second opinion`],
            ["Amount charged", m(r.amountCents)],
            ...(r.refundedCents ? ([["Refunded", m(r.refundedCents)]] as const) : []),
            ["Card", `${r.cardBrand ?? "card"} ending ${r.cardLast4 ?? "····"}`],
            ["Authorised", date(r.authorizedAt)],
            ["Charged", date(r.capturedAt)],
            ...(r.refundedAt ? ([["Refunded on", date(r.refundedAt)]] as const) : []),
          ] as ReadonlyArray<readonly [string, string]>
        ).map(([k, v]) => (
          <div key={k}>
            <dt className="text-sm text-ink-500">{k}</dt>
            <dd className="font-semibold text-ink-900">{v}</dd>
          </div>
        ))}
      </dl>
    </Card>
  );
}

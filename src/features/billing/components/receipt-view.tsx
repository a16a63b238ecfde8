import { formatDateTime, formatMoney, formatPercentBp } from "../../../../shared/format";
import { buttonClass, Card, Notice } from "../../../components/ui/form";
import { useReceipt } from "../api/get-receipt";

/** One printable receipt: the seller and the buyer, the service, the amount and the tax it includes. */
export function ReceiptView({ paymentId }: { paymentId: string }) {
  const q = useReceipt(paymentId);
  if (q.isPending)
    return (
      <div className="h-40 animate-pulse rounded-xl bg-ink-100" aria-busy="true" aria-label="Loading the receipt" />
    );
  if (q.isError)
    return (
      <Notice tone="error" title="No such receipt">
        {q.error.message}
      </Notice>
    );
  const r = q.data;
  const m = (c: number) => formatMoney(c, r.currency);
  const rows: [string, string][] = [
    ["Sold by", `${r.seller.name}, ${r.seller.address}`],
    ["Seller's tax number", r.seller.taxId],
    ["Billed to", r.shopName],
    ["Case", r.caseLabel],
    ["Service", `${r.tierLabel} second opinion`],
    ["Amount charged", m(r.amountCents)],
    r.tax
      ? [`${r.tax.label} included (${formatPercentBp(r.tax.basisPoints)})`, m(r.tax.cents)]
      : ["Tax", "No tax charged"],
    ...(r.refundedCents ? ([["Refunded", m(r.refundedCents)]] as [string, string][]) : []),
    ["Card", `${r.cardBrand ?? "card"} ending ${r.cardLast4 ?? "····"}`],
    ["Authorised", formatDateTime(r.authorizedAt)],
    ["Charged", formatDateTime(r.capturedAt)],
    ...(r.refundedAt ? ([["Refunded on", formatDateTime(r.refundedAt)]] as [string, string][]) : []),
  ];
  return (
    <Card
      title={`Receipt ${r.receiptNumber}`}
      actions={
        <button type="button" className={`${buttonClass.secondary} no-print`} onClick={() => globalThis.print()}>
          Print
        </button>
      }
    >
      <dl className="grid gap-x-8 gap-y-2 sm:grid-cols-2">
        {rows.map(([k, v]) => (
          <div key={k} className="min-w-0">
            <dt className="text-sm text-ink-500">{k}</dt>
            <dd className="break-words font-semibold text-ink-900">{v}</dd>
          </div>
        ))}
      </dl>
      <p className="mt-4 text-sm text-ink-600">
        {r.tax
          ? `Prices include ${r.tax.label.toLowerCase()}: of the ${m(r.amountCents)} charged, ${m(r.tax.cents)} is tax.`
          : "No tax is included in this price."}
      </p>
    </Card>
  );
}

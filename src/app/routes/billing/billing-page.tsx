import { BillingView } from "../../../features/billing/components/billing-view";

/** /billing — the owner's payments and receipts. */
export function BillingPage() {
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Billing</h1>
      <BillingView />
    </div>
  );
}

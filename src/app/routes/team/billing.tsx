import { Card } from "../../../components/ui/form";

/** /billing — placeholder until payments land. */
export function BillingPage() {
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Billing</h1>
      <Card>
        <p className="text-ink-700">Payments per case, receipts and refunds will appear here.</p>
      </Card>
    </div>
  );
}

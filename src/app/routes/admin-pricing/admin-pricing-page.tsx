import { PricingEditor } from "../../../features/pricing/components/pricing-editor";
import { PayoutsAdmin } from "../../../features/earnings/components/payouts-admin";

/** /admin/pricing — tiers, the desk's share, queue timings, and payouts to experts. */
export function AdminPricingPage() {
  return (
    <div className="space-y-5">
      <h1 className="text-2xl font-bold">Pricing and payouts</h1>
      <PricingEditor />
      <PayoutsAdmin />
    </div>
  );
}

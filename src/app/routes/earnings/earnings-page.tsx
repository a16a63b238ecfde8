import { EarningsView } from "../../../features/earnings/components/earnings-view";

/** /earnings — the expert's earnings and payouts. */
export function EarningsPage() {
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Earnings</h1>
      <EarningsView />
    </div>
  );
}

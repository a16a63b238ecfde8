import { Link, useParams } from "react-router-dom";
import { ReceiptView } from "../../../features/billing/components/receipt-view";

/** /billing/receipts/:paymentId */
export function ReceiptPage() {
  const { paymentId = "" } = useParams();
  return (
    <div className="space-y-4">
      <Link
        to="/billing"
        className="no-print inline-flex min-h-11 items-center text-sm font-semibold text-ink-600 hover:text-ink-900"
      >
        ← Billing
      </Link>
      <ReceiptView paymentId={paymentId} />
    </div>
  );
}

import { useSearchParams } from "react-router-dom";
import { BillingView } from "../../../features/billing/components/billing-view";
import { ShopPicker } from "../../../features/desk/components/shop-picker";
import { useMe } from "../../../features/auth/api/get-me";

/** /billing — the owner's payments and receipts; admins choose the shop (?shopId=…). */
export function BillingPage() {
  const me = useMe();
  const [sp, setSp] = useSearchParams();
  const admin = me.data?.role === "admin";
  const shopId = sp.get("shopId") ?? "";
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Billing</h1>
      {admin ? (
        <ShopPicker value={shopId} onChange={(id) => setSp(id ? { shopId: id } : {}, { replace: true })} />
      ) : null}
      {admin && !shopId ? (
        <p className="text-ink-600">Choose a shop to see its payments, refunds and receipts.</p>
      ) : (
        <BillingView shopId={admin ? shopId : undefined} />
      )}
    </div>
  );
}

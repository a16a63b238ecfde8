/** The shop's billing page and receipts (read-only queries over payments). */
import { and, desc, eq, inArray } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { notFound } from "../http/errors";
import type { BillingView } from "../../shared/views/money";
import type { ReceiptView } from "../../shared/views/queue";
import { caseLabel } from "../../shared/domain/case-label";
import { includedTaxCents } from "../../shared/domain/money";
import { ledgerBalance } from "./ledger";
import { getPayment, presentPayment, receiptNumber } from "./store";

const { payment } = schema;

/** The owner's billing page: every payment attempt that reached the payment service, newest first. */
export async function shopBilling(ctx: AppContext, shopId: string): Promise<BillingView> {
  const rows = await ctx.db.read(async (tx) =>
    tx
      .select({ p: payment, c: schema.caseTable })
      .from(payment)
      .innerJoin(schema.caseTable, eq(schema.caseTable.id, payment.caseId))
      .where(
        and(
          eq(payment.shopId, shopId),
          inArray(payment.status, ["authorized", "captured", "released", "refunded", "failed"]),
        ),
      )
      .orderBy(desc(payment.createdAt))
      .all(),
  );
  let charged = 0;
  let refunded = 0;
  let held = 0;
  for (const { p } of rows) {
    if (p.status === "captured" || p.status === "refunded") charged += p.amountCents;
    if (p.status === "authorized") held += p.amountCents;
    if (p.status === "refunded") refunded += p.amountCents;
  }
  return {
    currency: rows[0]?.p.currency ?? "usd",
    totals: { chargedCents: charged, refundedCents: refunded, heldCents: held },
    payments: rows.map(({ p, c }) => ({
      ...presentPayment(p),
      caseId: c.id,
      caseLabel: caseLabel(c),
      createdAt: p.createdAt.toISOString(),
    })),
  } satisfies BillingView;
}

/** A receipt (captured or refunded payments only); `shopId` null: any shop (admins). */
export async function receiptFor(ctx: AppContext, shopId: string | null, paymentId: string): Promise<ReceiptView> {
  return ctx.db.read(async (tx) => {
    const p = await getPayment(tx, paymentId);
    if (!p || (shopId !== null && p.shopId !== shopId)) throw notFound("Receipt");
    if (p.status !== "captured" && p.status !== "refunded") throw notFound("Receipt");
    const c = (await tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, p.caseId)).get())!;
    const s = (await tx.select().from(schema.shop).where(eq(schema.shop.id, p.shopId)).get())!;
    const refundedCents = (await ledgerBalance(tx, p.caseId)).refundedCents;
    const env = ctx.env;
    const taxBp = p.taxBasisPoints ?? Math.round(env.TAX_RATE_PERCENT * 100);
    return {
      receiptNumber: receiptNumber(p),
      seller: { name: env.SELLER_NAME, address: env.SELLER_ADDRESS, taxId: env.SELLER_TAX_ID },
      tax:
        taxBp > 0
          ? {
              label: env.TAX_LABEL,
              basisPoints: taxBp,
              cents: includedTaxCents(p.amountCents, taxBp),
              pricesIncludeTax: true,
            }
          : null,
      shopName: s.name,
      caseId: c.id,
      caseLabel: caseLabel(c),
      tierLabel: p.tierLabel,
      amountCents: p.amountCents,
      refundedCents,
      currency: p.currency,
      status: p.status,
      cardBrand: p.cardBrand,
      cardLast4: p.cardLast4,
      authorizedAt: p.authorizedAt?.toISOString() ?? null,
      capturedAt: p.capturedAt?.toISOString() ?? null,
      refundedAt: p.refundedAt?.toISOString() ?? null,
    } satisfies ReceiptView;
  });
}

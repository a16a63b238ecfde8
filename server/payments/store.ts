/**
 * Payment rows: reading them, which attempt counts for a case, and how a payment is shown. A
 * payment only ever moves forward: creating → pending (a checkout is open) → authorized (the hold)
 * → captured or released → refunded; failed and expired end an attempt that never held money.
 */
import { and, eq, inArray } from "drizzle-orm";
import { schema, type Tx } from "../db/client";
import type { PaymentView } from "../../shared/views/queue";

export type PaymentRow = typeof schema.payment.$inferSelect;
export type PaymentStatus = PaymentView["status"];

const { payment, caseQueueState } = schema;

/** How far along a payment is; a payment only ever moves to a higher rank. */
const RANK: Record<PaymentStatus, number> = {
  creating: 0,
  pending: 1,
  failed: 1,
  expired: 1,
  authorized: 2,
  captured: 3,
  released: 3,
  refunded: 4,
};
export const rank = (s: string): number => RANK[s as PaymentStatus] ?? 0;

/** Statuses of an attempt whose checkout may still be paid. */
export const OPEN_CHECKOUT: readonly PaymentStatus[] = ["creating", "pending", "failed"];

export async function getPayment(tx: Tx, id: string): Promise<PaymentRow | undefined> {
  return tx.select().from(payment).where(eq(payment.id, id)).get();
}

/** The payment attempt that counts for a case (the latest submit). */
export async function currentPayment(tx: Tx, caseId: string): Promise<PaymentRow | undefined> {
  const qs = await tx
    .select({ paymentId: caseQueueState.paymentId })
    .from(caseQueueState)
    .where(eq(caseQueueState.caseId, caseId))
    .get();
  return qs?.paymentId ? getPayment(tx, qs.paymentId) : undefined;
}

/** Our payment an outside reference names, if any (the intent first, then the session, then our id). */
export async function findPayment(
  tx: Tx,
  ref: { paymentId?: string | null; paymentIntentId?: string | null; sessionId?: string | null },
): Promise<PaymentRow | undefined> {
  if (ref.paymentIntentId) {
    const p = await tx.select().from(payment).where(eq(payment.paymentIntentId, ref.paymentIntentId)).get();
    if (p) return p;
  }
  if (ref.sessionId) {
    const p = await tx.select().from(payment).where(eq(payment.checkoutSessionId, ref.sessionId)).get();
    if (p) return p;
  }
  if (ref.paymentId) return getPayment(tx, ref.paymentId);
  return undefined;
}

/** Moves a payment to `status` only while it is still in one of `from` (returns whether it moved). */
export async function movePayment(
  tx: Tx,
  id: string,
  from: readonly PaymentStatus[],
  set: Partial<typeof payment.$inferInsert> & { status: PaymentStatus; updatedAt: Date },
): Promise<boolean> {
  const moved = await tx
    .update(payment)
    .set(set)
    .where(and(eq(payment.id, id), inArray(payment.status, [...from])))
    .returning({ id: payment.id })
    .all();
  return moved.length === 1;
}

export function receiptNumber(p: Pick<PaymentRow, "id" | "createdAt">): string {
  return `BL-${p.createdAt.toISOString().slice(0, 10).replace(/-/g, "")}-${p.id.slice(0, 8).toUpperCase()}`;
}

export function presentPayment(p: PaymentRow): PaymentView {
  const iso = (d: Date | null) => (d ? d.toISOString() : null);
  return {
    id: p.id,
    status: p.status as PaymentStatus,
    tier: p.tier,
    tierLabel: p.tierLabel,
    amountCents: p.amountCents,
    currency: p.currency,
    deadlineMinutes: p.deadlineMinutes,
    checkoutUrl: p.status === "pending" || p.status === "failed" ? p.checkoutUrl : null,
    message: p.status === "failed" ? p.failureMessage : null,
    cardBrand: p.cardBrand,
    cardLast4: p.cardLast4,
    authorizedAt: iso(p.authorizedAt),
    capturedAt: iso(p.capturedAt),
    releasedAt: iso(p.releasedAt),
    refundedAt: iso(p.refundedAt),
    receiptNumber: p.status === "captured" || p.status === "refunded" ? receiptNumber(p) : null,
  } satisfies PaymentView;
}

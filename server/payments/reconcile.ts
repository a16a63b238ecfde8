/**
 * Bringing our payment row and the ledger up to date with a PaymentIntent as Stripe has it now.
 * Idempotent (applying the same intent again changes nothing) and forward only, so webhooks in any
 * order, replays and our own calls' answers give the same result.
 *
 * What happened is returned as facts (authorised, failed, captured, released, refunded, expired);
 * the payments never touch a case. The caller (the workflow) reacts to the facts in the same unit —
 * a hold that arrives puts the case in the queue, for example — through the `PaymentReactor` it
 * passes in.
 */
import { and, eq, sql } from "drizzle-orm";
import type Stripe from "stripe";
import type { Logger } from "pino";
import { schema, type Tx } from "../db/client";
import { splitBetween, splitCents } from "../../shared/domain/money";
import { recordLedger } from "./ledger";
import { getPayment, movePayment, rank, type PaymentRow } from "./store";

export type PaymentFact =
  | { kind: "authorized"; payment: PaymentRow }
  | { kind: "failed"; payment: PaymentRow; code: string; message: string }
  | { kind: "captured"; payment: PaymentRow; amountCents: number; deskCents: number; expertCents: number }
  | { kind: "released"; payment: PaymentRow; reason: string | null }
  | { kind: "refunded"; payment: PaymentRow; amountCents: number }
  | { kind: "expired"; payment: PaymentRow };

/** The workflow's reaction to payment facts, run inside the same unit. */
export type PaymentReactor = (tx: Tx, facts: PaymentFact[], now: Date) => Promise<void>;

const { payment } = schema;

export function chargeOf(pi: Stripe.PaymentIntent): Stripe.Charge | null {
  return pi.latest_charge && typeof pi.latest_charge === "object" ? pi.latest_charge : null;
}

/** A message a technician understands, from Stripe's last_payment_error. */
export function paymentErrorMessage(err: Stripe.PaymentIntent.LastPaymentError | null | undefined): string {
  const code = err?.decline_code ?? err?.code ?? "";
  const reasons: Record<string, string> = {
    insufficient_funds: "the card was declined for insufficient funds",
    expired_card: "the card has expired",
    incorrect_cvc: "the security code (CVC) is wrong",
    incorrect_number: "the card number is wrong",
    invalid_number: "the card number is wrong",
    processing_error: "the card could not be processed",
  };
  const reason = reasons[code] ?? "the card was declined by the bank";
  return `Payment did not go through: ${reason}. Nothing was charged and the case is not in the queue yet. Try again with another card.`;
}

/** Moves `p0` forward to match `pi` (fetched from Stripe just now) and returns what happened. */
export async function reconcileInTx(
  tx: Tx,
  p0: PaymentRow,
  pi: Stripe.PaymentIntent,
  now: Date,
  log: Logger,
): Promise<PaymentFact[]> {
  const facts: PaymentFact[] = [];
  let p = (await getPayment(tx, p0.id))!;
  if (!p.paymentIntentId) {
    await tx.update(payment).set({ paymentIntentId: pi.id, updatedAt: now }).where(eq(payment.id, p.id)).run();
    p = { ...p, paymentIntentId: pi.id };
  }
  const charge = chargeOf(pi);

  if (
    pi.status === "requires_payment_method" ||
    pi.status === "requires_confirmation" ||
    pi.status === "requires_action"
  ) {
    await failed(tx, p, pi, now, facts);
    return facts;
  }
  if (pi.status === "requires_capture" && rank(p.status) < 2) await authorized(tx, p, pi, charge, now, facts, log);
  p = (await getPayment(tx, p.id))!;
  if (pi.status === "succeeded" && p.status === "authorized") {
    await captured(tx, p, pi.amount_received, pi.id, now, facts);
    p = (await getPayment(tx, p.id))!;
  }
  if (pi.status === "canceled") {
    if (p.status === "authorized") await released(tx, p, pi, now, facts);
    else if (rank(p.status) < 2 && p.status !== "expired") {
      if (await movePayment(tx, p.id, ["creating", "pending", "failed"], { status: "expired", updatedAt: now }))
        facts.push({ kind: "expired", payment: p });
    }
    return facts;
  }
  // Refunds after capture (ours, or made by the desk in Stripe's dashboard).
  if (charge && (p.status === "captured" || p.status === "refunded") && charge.amount_refunded > 0) {
    await refunded(tx, p, charge, now, facts);
  }
  return facts;
}

async function failed(tx: Tx, p: PaymentRow, pi: Stripe.PaymentIntent, now: Date, facts: PaymentFact[]): Promise<void> {
  if (!pi.last_payment_error || rank(p.status) > 1 || p.status === "expired") return;
  const message = paymentErrorMessage(pi.last_payment_error);
  const code = pi.last_payment_error.decline_code ?? pi.last_payment_error.code ?? "card_declined";
  if (p.status === "failed" && p.failureMessage === message) return;
  await tx
    .update(payment)
    .set({ status: "failed", failureCode: code, failureMessage: message, updatedAt: now })
    .where(eq(payment.id, p.id))
    .run();
  facts.push({
    kind: "failed",
    payment: { ...p, status: "failed", failureCode: code, failureMessage: message },
    code,
    message,
  });
}

async function authorized(
  tx: Tx,
  p: PaymentRow,
  pi: Stripe.PaymentIntent,
  charge: Stripe.Charge | null,
  now: Date,
  facts: PaymentFact[],
  log: Logger,
): Promise<void> {
  if (pi.amount !== p.amountCents)
    log.warn(
      { paymentId: p.id, pi: pi.id, amount: pi.amount, expected: p.amountCents },
      "authorised amount differs from the price",
    );
  const card = charge?.payment_method_details?.card;
  const set = {
    status: "authorized" as const,
    paymentIntentId: pi.id,
    chargeId: charge?.id ?? (typeof pi.latest_charge === "string" ? pi.latest_charge : null),
    cardLast4: card?.last4 ?? null,
    cardBrand: card?.brand ?? null,
    captureBefore: card?.capture_before ? new Date(card.capture_before * 1000) : null,
    failureCode: null,
    failureMessage: null,
    authorizedAt: now,
    updatedAt: now,
  };
  await tx.update(payment).set(set).where(eq(payment.id, p.id)).run();
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: pi.id, at: now };
  await recordLedger(tx, { ...base, key: `authorization:${p.id}`, kind: "authorization", amountCents: p.amountCents });
  facts.push({ kind: "authorized", payment: { ...p, ...set } });
}

async function captured(
  tx: Tx,
  p: PaymentRow,
  amount: number,
  piId: string,
  now: Date,
  facts: PaymentFact[],
): Promise<void> {
  const c = await tx
    .select({ expertId: schema.caseTable.expertId })
    .from(schema.caseTable)
    .where(eq(schema.caseTable.id, p.caseId))
    .get();
  const total = amount > 0 ? amount : p.amountCents;
  const { deskCents, expertCents } = splitCents(total, p.deskShareBasisPoints);
  await tx
    .update(payment)
    .set({ status: "captured", capturedAt: now, updatedAt: now })
    .where(eq(payment.id, p.id))
    .run();
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: piId, at: now };
  await recordLedger(tx, { ...base, key: `capture:${p.id}`, kind: "capture", amountCents: total });
  if (total < p.amountCents) {
    await recordLedger(tx, {
      ...base,
      key: `release:${p.id}`,
      kind: "release",
      amountCents: p.amountCents - total,
      note: "uncaptured remainder",
    });
  }
  await recordLedger(tx, { ...base, key: `desk_share:${p.id}`, kind: "desk_share", amountCents: deskCents });
  await recordLedger(tx, {
    ...base,
    key: `expert_earning:${p.id}`,
    kind: "expert_earning",
    amountCents: expertCents,
    expertId: c?.expertId ?? null,
  });
  facts.push({
    kind: "captured",
    payment: { ...p, status: "captured", capturedAt: now },
    amountCents: total,
    deskCents,
    expertCents,
  });
}

async function released(
  tx: Tx,
  p: PaymentRow,
  pi: Stripe.PaymentIntent,
  now: Date,
  facts: PaymentFact[],
): Promise<void> {
  await tx
    .update(payment)
    .set({ status: "released", releasedAt: now, updatedAt: now })
    .where(eq(payment.id, p.id))
    .run();
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: pi.id, at: now };
  await recordLedger(tx, {
    ...base,
    key: `release:${p.id}`,
    kind: "release",
    amountCents: p.amountCents,
    note: pi.cancellation_reason ?? null,
  });
  facts.push({
    kind: "released",
    payment: { ...p, status: "released", releasedAt: now },
    reason: pi.cancellation_reason ?? null,
  });
}

async function ledgerSum(tx: Tx, paymentId: string, kind: "refund" | "capture"): Promise<number> {
  const r = await tx
    .select({ t: sql<number>`coalesce(sum(${schema.ledgerEntry.amountCents}), 0)` })
    .from(schema.ledgerEntry)
    .where(and(eq(schema.ledgerEntry.paymentId, paymentId), eq(schema.ledgerEntry.kind, kind)))
    .get();
  return Number(r?.t ?? 0);
}

async function refunded(tx: Tx, p: PaymentRow, charge: Stripe.Charge, now: Date, facts: PaymentFact[]): Promise<void> {
  const already = await ledgerSum(tx, p.id, "refund");
  const delta = charge.amount_refunded - already;
  if (delta <= 0) return;
  const c = await tx
    .select({ expertId: schema.caseTable.expertId })
    .from(schema.caseTable)
    .where(eq(schema.caseTable.id, p.caseId))
    .get();
  // cumulative, so partial refunds reverse exactly the shares taken at capture, to the cent
  const { deskCents, expertCents } = splitBetween(already, charge.amount_refunded, p.deskShareBasisPoints);
  const base = { currency: p.currency, caseId: p.caseId, paymentId: p.id, stripeId: charge.id, at: now };
  const upto = charge.amount_refunded;
  await recordLedger(tx, { ...base, key: `refund:${p.id}:${upto}`, kind: "refund", amountCents: delta });
  await recordLedger(tx, {
    ...base,
    key: `desk_share_reversal:${p.id}:${upto}`,
    kind: "desk_share_reversal",
    amountCents: deskCents,
  });
  await recordLedger(tx, {
    ...base,
    key: `expert_earning_reversal:${p.id}:${upto}`,
    kind: "expert_earning_reversal",
    amountCents: expertCents,
    expertId: c?.expertId ?? null,
  });
  if (upto >= (await ledgerSum(tx, p.id, "capture"))) {
    await tx
      .update(payment)
      .set({ status: "refunded", refundedAt: now, updatedAt: now })
      .where(eq(payment.id, p.id))
      .run();
  }
  facts.push({ kind: "refunded", payment: p, amountCents: delta });
}

/**
 * How a case reacts to what happened to its money (the facts server/payments reports), inside the
 * unit that recorded it:
 * - a hold on the attempt that counts, while the case awaits payment → `pay`: queued with its
 *   deadline, offers made, "Paid and queued"; a hold on any other attempt is released again;
 * - a declined card → the message on the case and an in-app notice;
 * - a capture → a receipt; a refund → a refund notice;
 * - a hold that ended while the case was still open (lapsed at the payment service, or cancelled)
 *   → `holdEnds`: the case ends as refunded.
 */
import type { Tx } from "../db/client";
import type { PaymentFact, PaymentReactor } from "../payments/reconcile";
import { notices } from "../services/notices";
import type { CaseStatus } from "../../shared/domain/case-status";
import type { Effect } from "./effect";
import { noticeCase, noticePayment } from "./notice-data";
import { getCaseRow, queueState, recordCaseEvent, shopRecipients, transition, updateQueueState } from "./records";
import { createOffers } from "./routing";

const HELD: readonly CaseStatus[] = ["queued", "claimed", "needs_data"];

export function paymentReactor(effects: Effect[]): PaymentReactor {
  return async (tx, facts, now) => {
    for (const f of facts) await react(tx, f, now, effects);
  };
}

async function react(tx: Tx, f: PaymentFact, now: Date, fx: Effect[]): Promise<void> {
  const p = f.payment;
  const c = await getCaseRow(tx, p.caseId);
  if (!c) return;
  const isCurrent = (await queueState(tx, c.id, now)).paymentId === p.id;
  const event = (type: string, data: Record<string, unknown>) =>
    recordCaseEvent(tx, { caseId: c.id, actorId: null, type, at: now, data });
  fx.push({ kind: "announce", caseId: c.id });
  switch (f.kind) {
    case "authorized": {
      if (c.status !== "awaiting_payment" || !isCurrent) {
        // paid twice, or paid for a case that was withdrawn meanwhile: give the hold back
        await event("payment_superseded", { paymentId: p.id, status: c.status });
        fx.push({ kind: "release", paymentId: p.id, reason: "duplicate" });
        return;
      }
      const deadlineAt = new Date(now.getTime() + p.deadlineMinutes * 60_000);
      const data = {
        paymentId: p.id,
        amountCents: p.amountCents,
        currency: p.currency,
        tier: p.tier,
        deadlineAt: deadlineAt.toISOString(),
      };
      const row = await transition(tx, {
        caseId: c.id,
        from: "awaiting_payment",
        to: "queued",
        actorId: null,
        type: "payment_authorized",
        at: now,
        data,
        set: { tier: p.tier, priceCents: p.amountCents, deadlineAt, submittedAt: now },
      });
      await updateQueueState(tx, c.id, now, {
        queuedAt: now,
        lastPaymentError: null,
        offersWidenedAt: null,
        deadlineWarnedAt: null,
      });
      const offered = await createOffers(tx, row, now);
      fx.push({
        kind: "notify",
        to: await shopRecipients(tx, row),
        notice: notices.paymentAuthorized(noticeCase(row), noticePayment(p)),
      });
      fx.push({ kind: "notify", to: offered, notice: notices.caseOffered(noticeCase(row), noticePayment(p)) });
      return;
    }
    case "failed": {
      if (!isCurrent) return;
      await updateQueueState(tx, c.id, now, { lastPaymentError: f.message });
      await event("payment_failed", { code: f.code, paymentId: p.id });
      const to = p.createdBy ? [p.createdBy] : await shopRecipients(tx, c);
      fx.push({ kind: "notify", to, notice: notices.paymentFailed(noticeCase(c), f.message) });
      return;
    }
    case "captured": {
      await event("payment_captured", {
        paymentId: p.id,
        amountCents: f.amountCents,
        deskCents: f.deskCents,
        expertCents: f.expertCents,
      });
      fx.push({
        kind: "notify",
        to: await shopRecipients(tx, c),
        notice: notices.receipt(noticeCase(c), noticePayment(p)),
      });
      return;
    }
    case "released": {
      await event("payment_released", { paymentId: p.id, amountCents: p.amountCents, reason: f.reason });
      const ends = isCurrent && HELD.includes(c.status as CaseStatus);
      if (ends) {
        const type = f.reason === "automatic" ? "hold_lapsed" : "hold_cancelled";
        await transition(tx, {
          caseId: c.id,
          from: HELD,
          to: "refunded",
          actorId: null,
          type,
          at: now,
          data: { paymentId: p.id },
        });
      }
      fx.push({
        kind: "notify",
        to: await shopRecipients(tx, c),
        notice: notices.holdReleased(noticeCase(c), noticePayment(p), ends),
      });
      return;
    }
    case "refunded": {
      await event("payment_refunded", { paymentId: p.id, amountCents: f.amountCents });
      fx.push({
        kind: "notify",
        to: await shopRecipients(tx, c),
        notice: notices.refund(noticeCase(c), f.amountCents, p.currency),
      });
      return;
    }
    case "expired":
      return;
  }
}

import type { PaymentStatus } from "../../../shared/views/queue";
import { sqliteTable, text, integer, real, index, uniqueIndex } from "drizzle-orm/sqlite-core";
import { user } from "./auth";
import { shop } from "./shops";
import { caseTable } from "./cases";

/**
 * The paid queue: pricing, payments, the money ledger, processed Stripe events, offers to experts,
 * per-case queue state, answers and confirmations, in-app notifications and payouts.
 * All amounts are integer minor units (cents); all times are ms timestamps from ctx.now().
 */

/** A price tier set by an admin, e.g. "standard" (24 h) or "priority" (2 h). */
export const pricingTier = sqliteTable("pricing_tier", {
  /** a short slug: "standard", "priority" */
  id: text("id").primaryKey(),
  label: text("label").notNull(),
  description: text("description"),
  priceCents: integer("price_cents").notNull(),
  /** the answer deadline after payment, minutes */
  deadlineMinutes: integer("deadline_minutes").notNull(),
  active: integer("active", { mode: "boolean" }).notNull().default(true),
  sortOrder: integer("sort_order").notNull().default(0),
  updatedBy: text("updated_by"),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
});

/** One row (id = 1): the desk's share and the queue's timings. */
export const deskSettings = sqliteTable("desk_settings", {
  id: integer("id").primaryKey(),
  /** ISO 4217, lower-case as Stripe writes it */
  currency: text("currency").notNull().default("usd"),
  /** the desk's share of each captured payment, in basis points (2000 = 20 %) */
  deskShareBasisPoints: integer("desk_share_bp").notNull().default(2000),
  /** how many matching experts are offered a case first */
  firstWaveSize: integer("first_wave_size").notNull().default(3),
  /** an unclaimed case is offered to every approved expert after this many minutes */
  widenAfterMinutes: integer("widen_after_minutes").notNull().default(30),
  /** an answered case with no confirmation is closed after this many days */
  closeAnsweredAfterDays: integer("close_answered_after_days").notNull().default(7),
  updatedBy: text("updated_by"),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
});

/**
 * One payment attempt for a case (one Checkout Session). Status:
 * creating → pending → (failed ⇄ pending) → authorized → captured | released; captured → refunded;
 * pending/failed → expired (session abandoned or replaced).
 */
export const payment = sqliteTable(
  "payment",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    shopId: text("shop_id")
      .notNull()
      .references(() => shop.id, { onDelete: "cascade" }),
    tier: text("tier").notNull(),
    tierLabel: text("tier_label").notNull(),
    amountCents: integer("amount_cents").notNull(),
    currency: text("currency").notNull(),
    /** snapshots taken at submit, so a later price change does not touch this case */
    deskShareBasisPoints: integer("desk_share_bp").notNull(),
    deadlineMinutes: integer("deadline_minutes").notNull(),
    /** the tax rate included in the price, basis points, as configured at submit (null: before it was recorded) */
    taxBasisPoints: integer("tax_bp"),
    status: text("status").$type<PaymentStatus>().notNull(),
    checkoutSessionId: text("checkout_session_id").unique(),
    checkoutUrl: text("checkout_url"),
    paymentIntentId: text("payment_intent_id").unique(),
    chargeId: text("charge_id"),
    cardLast4: text("card_last4"),
    cardBrand: text("card_brand"),
    /** the hold's end (charge.payment_method_details.card.capture_before); never capture at or after it */
    captureBefore: integer("capture_before", { mode: "timestamp_ms" }),
    failureCode: text("failure_code"),
    failureMessage: text("failure_message"),
    createdBy: text("created_by").references(() => user.id, { onDelete: "set null" }),
    authorizedAt: integer("authorized_at", { mode: "timestamp_ms" }),
    capturedAt: integer("captured_at", { mode: "timestamp_ms" }),
    releasedAt: integer("released_at", { mode: "timestamp_ms" }),
    refundedAt: integer("refunded_at", { mode: "timestamp_ms" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("payment_case_idx").on(t.caseId), index("payment_shop_idx").on(t.shopId, t.createdAt)],
);

/**
 * The money ledger. Each row is one movement, always a non-negative amount; `kind` says which:
 * authorization, capture, release (hold cancelled), refund, desk_share, expert_earning,
 * desk_share_reversal, expert_earning_reversal (after a refund), payout.
 * `key` makes each movement idempotent (the webhook and the direct call may both record it).
 */
export const ledgerEntry = sqliteTable(
  "ledger_entry",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    key: text("key").notNull().unique(),
    kind: text("kind").notNull(),
    amountCents: integer("amount_cents").notNull(),
    currency: text("currency").notNull(),
    caseId: text("case_id"),
    paymentId: text("payment_id"),
    expertId: text("expert_id"),
    payoutId: text("payout_id"),
    /** the Stripe object behind it: pi_…, re_…, tr_… */
    stripeId: text("stripe_id"),
    note: text("note"),
    at: integer("at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [
    index("ledger_case_idx").on(t.caseId),
    index("ledger_expert_idx").on(t.expertId, t.kind),
    index("ledger_payment_idx").on(t.paymentId),
  ],
);

/** Stripe events already applied: the primary key makes each apply exactly once. */
export const stripeEvent = sqliteTable("stripe_event", {
  id: text("id").primaryKey(),
  type: text("type").notNull(),
  objectId: text("object_id"),
  /** applied | ignored */
  outcome: text("outcome").notNull(),
  receivedAt: integer("received_at", { mode: "timestamp_ms" }).notNull(),
});

/** A case offered to an expert: wave 1 = matched specialists, wave 2 = widened to all approved. */
export const caseOffer = sqliteTable(
  "case_offer",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    expertId: text("expert_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    wave: integer("wave").notNull(),
    rank: integer("rank").notNull(),
    score: real("score").notNull(),
    /** JSON { systemMatch, makeMatch, openCases, resolved, rating } */
    reason: text("reason", { mode: "json" }).$type<Record<string, unknown>>(),
    offeredAt: integer("offered_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [uniqueIndex("case_offer_unique").on(t.caseId, t.expertId), index("case_offer_expert_idx").on(t.expertId)],
);

/** The queue's own state of a case (the case row keeps status, tier, price, deadline, expert). */
export const caseQueueState = sqliteTable("case_queue_state", {
  caseId: text("case_id")
    .primaryKey()
    .references(() => caseTable.id, { onDelete: "cascade" }),
  /** the payment attempt that counts for this case */
  paymentId: text("payment_id"),
  queuedAt: integer("queued_at", { mode: "timestamp_ms" }),
  offersWidenedAt: integer("offers_widened_at", { mode: "timestamp_ms" }),
  deadlineWarnedAt: integer("deadline_warned_at", { mode: "timestamp_ms" }),
  needsDataSince: integer("needs_data_since", { mode: "timestamp_ms" }),
  needsDataMessage: text("needs_data_message"),
  /** how many times the shop said "not fixed" */
  notFixedCount: integer("not_fixed_count").notNull().default(0),
  answeredAt: integer("answered_at", { mode: "timestamp_ms" }),
  lastPaymentError: text("last_payment_error"),
  updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
});

/** The expert's written answer (a second round when the first fix did not work). */
export const caseAnswer = sqliteTable(
  "case_answer",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    expertId: text("expert_id").references(() => user.id, { onDelete: "set null" }),
    round: integer("round").notNull(),
    diagnosis: text("diagnosis").notNull(),
    rootCause: text("root_cause").notNull(),
    recommendedFix: text("recommended_fix").notNull(),
    testsToConfirm: text("tests_to_confirm").notNull(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("case_answer_case_idx").on(t.caseId)],
);

/** The shop's word on an answer: fixed or not, a note, an optional 1–5 rating. */
export const caseConfirmation = sqliteTable(
  "case_confirmation",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    answerId: text("answer_id"),
    userId: text("user_id").references(() => user.id, { onDelete: "set null" }),
    expertId: text("expert_id"),
    fixed: integer("fixed", { mode: "boolean" }).notNull(),
    note: text("note"),
    rating: integer("rating"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("case_confirmation_case_idx").on(t.caseId), index("case_confirmation_expert_idx").on(t.expertId)],
);

/** In-app notifications (each is also mailed unless noted). */
export const notification = sqliteTable(
  "notification",
  {
    id: text("id").primaryKey(),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    kind: text("kind").notNull(),
    caseId: text("case_id"),
    title: text("title").notNull(),
    body: text("body").notNull(),
    /** a path inside the app, e.g. /cases/abc */
    link: text("link"),
    /** how many happenings this notice stands for (new messages or marks fold into one unread notice) */
    count: integer("count").notNull().default(1),
    readAt: integer("read_at", { mode: "timestamp_ms" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("notification_user_idx").on(t.userId, t.createdAt)],
);

/** A transfer of an expert's unpaid earnings to their connected account. pending → paid | failed. */
export const payout = sqliteTable(
  "payout",
  {
    id: text("id").primaryKey(),
    expertId: text("expert_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    amountCents: integer("amount_cents").notNull(),
    currency: text("currency").notNull(),
    status: text("status").notNull(),
    stripeAccountId: text("stripe_account_id"),
    stripeTransferId: text("stripe_transfer_id").unique(),
    failureMessage: text("failure_message"),
    createdBy: text("created_by"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
    paidAt: integer("paid_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("payout_expert_idx").on(t.expertId, t.createdAt)],
);

/**
 * The money ledger in integer cents. Every movement is a row with a unique key, so recording the
 * same movement twice (the direct SDK answer and the webhook that follows it) changes nothing.
 *
 * The balance rule checked after every scenario:
 *   authorised = captured + released + still held
 * where "still held" is the sum of payments whose hold is open (status `authorized`), and the
 * captured money, less refunds, is split exactly between the desk and the experts:
 *   captured − refunded = (desk share − reversals) + (expert earnings − reversals).
 */
import { and, eq, inArray, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { assertCents } from "../../shared/domain/money";
import type { LedgerBalanceView } from "../../shared/views/money";

export const ledgerKinds = [
  "authorization",
  "capture",
  "release",
  "refund",
  "desk_share",
  "expert_earning",
  "desk_share_reversal",
  "expert_earning_reversal",
  "payout",
] as const;
export type LedgerKind = (typeof ledgerKinds)[number];

const { ledgerEntry, payment } = schema;

export interface LedgerInput {
  key: string;
  kind: LedgerKind;
  amountCents: number;
  currency: string;
  caseId?: string | null;
  paymentId?: string | null;
  expertId?: string | null;
  payoutId?: string | null;
  stripeId?: string | null;
  note?: string | null;
  at: Date;
}

/** Records one movement; returns false when a movement with this key is already recorded. */
export async function recordLedger(tx: Tx, e: LedgerInput): Promise<boolean> {
  assertCents(e.amountCents, "amountCents", true);
  const inserted = await tx
    .insert(ledgerEntry)
    .values({
      key: e.key,
      kind: e.kind,
      amountCents: e.amountCents,
      currency: e.currency,
      caseId: e.caseId ?? null,
      paymentId: e.paymentId ?? null,
      expertId: e.expertId ?? null,
      payoutId: e.payoutId ?? null,
      stripeId: e.stripeId ?? null,
      note: e.note ?? null,
      at: e.at,
    })
    .onConflictDoNothing({ target: ledgerEntry.key })
    .returning({ id: ledgerEntry.id })
    .all();
  return inserted.length === 1;
}

export type LedgerBalance = LedgerBalanceView;

/** The balance of one case's money, or of everything with "all" (inside the caller's unit). */
export async function ledgerBalance(tx: Tx, scope: string = "all"): Promise<LedgerBalance> {
  const where = scope === "all" ? undefined : eq(ledgerEntry.caseId, scope);
  const sums = await tx
    .select({ kind: ledgerEntry.kind, total: sql<number>`coalesce(sum(${ledgerEntry.amountCents}), 0)` })
    .from(ledgerEntry)
    .where(where)
    .groupBy(ledgerEntry.kind)
    .all();
  const heldWhere =
    scope === "all"
      ? eq(payment.status, "authorized")
      : and(eq(payment.status, "authorized"), eq(payment.caseId, scope));
  const held = await tx
    .select({ total: sql<number>`coalesce(sum(${payment.amountCents}), 0)` })
    .from(payment)
    .where(heldWhere)
    .get();
  return balanceOf(sums, Number(held?.total ?? 0));
}

function balanceOf(sums: { kind: string; total: number }[], held: number): LedgerBalance {
  const by = (k: LedgerKind) => Number(sums.find((s) => s.kind === k)?.total ?? 0);
  const b: LedgerBalance = {
    authorizedCents: by("authorization"),
    capturedCents: by("capture"),
    releasedCents: by("release"),
    heldCents: held,
    refundedCents: by("refund"),
    deskShareCents: by("desk_share") - by("desk_share_reversal"),
    expertEarningsCents: by("expert_earning") - by("expert_earning_reversal"),
    payoutCents: by("payout"),
    balanced: true,
    problems: [],
  };
  if (b.authorizedCents !== b.capturedCents + b.releasedCents + b.heldCents) {
    b.problems.push(
      `authorised ${b.authorizedCents} ≠ captured ${b.capturedCents} + released ${b.releasedCents} + held ${b.heldCents}`,
    );
  }
  if (b.capturedCents - b.refundedCents !== b.deskShareCents + b.expertEarningsCents) {
    b.problems.push(
      `captured ${b.capturedCents} − refunded ${b.refundedCents} ≠ desk ${b.deskShareCents} + experts ${b.expertEarningsCents}`,
    );
  }
  if (b.refundedCents > b.capturedCents) b.problems.push(`refunded ${b.refundedCents} > captured ${b.capturedCents}`);
  b.balanced = b.problems.length === 0;
  return b;
}

export async function ledgerForCase(tx: Tx, caseId: string) {
  return tx.select().from(ledgerEntry).where(eq(ledgerEntry.caseId, caseId)).orderBy(ledgerEntry.id).all();
}

/** An expert's earnings and payouts so far, in cents. */
export async function expertTotals(
  tx: Tx,
  expertId: string,
): Promise<{ earnedCents: number; reversedCents: number; paidCents: number }> {
  const rows = await tx
    .select({ kind: ledgerEntry.kind, total: sql<number>`coalesce(sum(${ledgerEntry.amountCents}), 0)` })
    .from(ledgerEntry)
    .where(
      and(
        eq(ledgerEntry.expertId, expertId),
        inArray(ledgerEntry.kind, ["expert_earning", "expert_earning_reversal", "payout"]),
      ),
    )
    .groupBy(ledgerEntry.kind)
    .all();
  const by = (k: string) => Number(rows.find((r) => r.kind === k)?.total ?? 0);
  return { earnedCents: by("expert_earning"), reversedCents: by("expert_earning_reversal"), paidCents: by("payout") };
}

/** GET /api/admin/ledger: the balance (of one case or of everything) and the case's entries. */
export async function ledgerView(ctx: AppContext, caseId?: string) {
  return ctx.db.read(async (tx) => ({
    balance: await ledgerBalance(tx, caseId ?? "all"),
    entries: caseId ? await ledgerForCase(tx, caseId) : undefined,
  }));
}

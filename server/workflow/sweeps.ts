/**
 * The desk's timed moves (every 30 s and at start; payouts daily), registered once where the
 * server starts (server/index.ts). All times come from ctx.now(); deadlines are stored, so the
 * sweeps pick up where they left off after a restart. Tests call `runQueueSweeps(ctx)` (or one
 * sweep) after moving ctx.now(); NODE_ENV=test does not run them by itself.
 */
import { and, eq, gt, inArray, isNull, lte } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Sweep } from "../services/background";
import { notices } from "../services/notices";
import { getPricing } from "../services/pricing";
import { runPayouts } from "../payments/payouts";
import { currentPayment } from "../payments/store";
import type { CaseStatus } from "../../shared/domain/case-status";
import { perform, runEffects } from "./effects";
import { noticeCase, noticePayment } from "./notice-data";
import { getCaseRow, shopRecipients, transition, type CaseRow } from "./records";
import { offeredExperts, widenOffers } from "./routing";
import { noteNewMaterial } from "./commands/data";

const { caseTable, caseQueueState, payment } = schema;
const HELD: readonly CaseStatus[] = ["queued", "claimed", "needs_data"];

/** An unclaimed case is offered to every approved, available expert after `widenAfterMinutes`. */
export async function sweepWidenOffers(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const { due, minutes } = await ctx.db.read(async (tx) => {
    const minutes = (await getPricing(tx)).widenAfterMinutes;
    const cutoff = new Date(now.getTime() - minutes * 60_000);
    const rows = await tx
      .select({ id: caseTable.id })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .where(
        and(
          eq(caseTable.status, "queued"),
          isNull(caseQueueState.offersWidenedAt),
          lte(caseQueueState.queuedAt, cutoff),
        ),
      )
      .all();
    return { due: rows, minutes };
  });
  for (const { id } of due) {
    await perform(ctx, async (tx, fx) => {
      const c = await getCaseRow(tx, id);
      if (!c || c.status !== "queued") return;
      // once: a second run (another node, a job run again after its node died) finds it widened
      const qs = await tx.select().from(caseQueueState).where(eq(caseQueueState.caseId, id)).get();
      if (qs?.offersWidenedAt) return;
      const offered = await widenOffers(tx, c, now, `unclaimed after ${minutes} minutes`);
      const p = await currentPayment(tx, id);
      fx.push({ kind: "notify", to: offered, notice: notices.caseOffered(noticeCase(c), p ? noticePayment(p) : null) });
    });
  }
  return due.length;
}

/** Warn when a fifth of the answer window (at least 15 minutes) is left. */
export async function sweepDeadlineWarnings(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const open = await ctx.db.read(async (tx) =>
    tx
      .select({ c: caseTable, window: payment.deadlineMinutes })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .leftJoin(payment, eq(payment.id, caseQueueState.paymentId))
      .where(
        and(
          inArray(caseTable.status, ["queued", "claimed"]),
          isNull(caseQueueState.deadlineWarnedAt),
          gt(caseTable.deadlineAt, now),
        ),
      )
      .all(),
  );
  let warned = 0;
  for (const { c, window } of open) {
    const leftMs = c.deadlineAt!.getTime() - now.getTime();
    if (leftMs > Math.max(15 * 60_000, ((window ?? 24 * 60) * 60_000) / 5)) continue;
    await perform(ctx, async (tx, fx) => {
      // once: a second run (another node, a job run again after its node died) finds it warned
      const warnedNow = await tx
        .update(caseQueueState)
        .set({ deadlineWarnedAt: now, updatedAt: now })
        .where(and(eq(caseQueueState.caseId, c.id), isNull(caseQueueState.deadlineWarnedAt)))
        .returning({ caseId: caseQueueState.caseId })
        .all();
      if (warnedNow.length === 0) return;
      const claimed = c.status === "claimed" && !!c.expertId;
      const to = claimed ? [c.expertId!] : await offeredExperts(tx, c.id);
      fx.push({
        kind: "notify",
        to,
        notice: notices.deadlineNear(noticeCase(c), claimed, Math.round(leftMs / 60_000)),
      });
    });
    warned++;
  }
  return warned;
}

/** Cases past their deadline, and cases waiting for data whose card hold ends within 6 hours. */
async function lateCases(ctx: AppContext, now: Date): Promise<CaseRow[]> {
  return ctx.db.read(async (tx) => {
    const late = await tx
      .select()
      .from(caseTable)
      .where(and(inArray(caseTable.status, ["queued", "claimed"]), lte(caseTable.deadlineAt, now)))
      .all();
    const holdEnding = await tx
      .select({ c: caseTable })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .innerJoin(payment, eq(payment.id, caseQueueState.paymentId))
      .where(
        and(
          eq(caseTable.status, "needs_data"),
          eq(payment.status, "authorized"),
          lte(payment.captureBefore, new Date(now.getTime() + 6 * 3600_000)),
        ),
      )
      .all();
    return [...late, ...holdEnding.map((r) => r.c)];
  });
}

/**
 * missDeadline: a missed deadline (queued or claimed, past deadlineAt) → refunded; the hold is
 * released and the shop and the expert are told. A case waiting for data has its deadline paused,
 * but it ends the same way when its card hold is about to end.
 */
export async function sweepDeadlines(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  let n = 0;
  for (const c of await lateCases(ctx, now)) {
    const waiting = c.status === "needs_data";
    try {
      await perform(ctx, async (tx, fx) => {
        const data = { deadlineAt: c.deadlineAt?.toISOString() ?? null, expertId: c.expertId };
        const type = waiting ? "hold_ending" : "deadline_missed";
        const row = await transition(tx, {
          caseId: c.id,
          from: HELD,
          to: "refunded",
          actorId: null,
          type,
          at: now,
          data,
        });
        fx.push(
          { kind: "announce", caseId: c.id },
          { kind: "returnMoney", caseId: c.id, reason: "abandoned" },
          { kind: "releaseStrayHolds", caseId: c.id },
        );
        fx.push({
          kind: "notify",
          to: await shopRecipients(tx, row),
          notice: notices.deadlineMissedShop(noticeCase(row), waiting),
        });
        if (c.expertId)
          fx.push({ kind: "notify", to: [c.expertId], notice: notices.deadlineMissedExpert(noticeCase(row)) });
      });
      n++;
    } catch (err) {
      if ((err as { status?: number }).status !== 409) throw err; // answered or withdrawn in the meantime
    }
  }
  return n;
}

/** needs_data cases that received a new trace or photo since the request go back to the expert. */
export async function sweepNewMaterial(ctx: AppContext): Promise<number> {
  const arrived = await ctx.db.read(async (tx) => {
    const waiting = await tx
      .select({ id: caseTable.id, since: caseQueueState.needsDataSince })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .where(eq(caseTable.status, "needs_data"))
      .all();
    const out: { id: string; by: string | null }[] = [];
    for (const w of waiting) {
      if (!w.since) continue;
      const t = await tx
        .select({ by: schema.trace.uploadedBy })
        .from(schema.trace)
        .where(and(eq(schema.trace.caseId, w.id), gt(schema.trace.createdAt, w.since)))
        .get();
      const ph = t
        ? undefined
        : await tx
            .select({ by: schema.photo.uploadedBy })
            .from(schema.photo)
            .where(and(eq(schema.photo.caseId, w.id), gt(schema.photo.createdAt, w.since)))
            .get();
      const hit = t ?? ph;
      if (hit) out.push({ id: w.id, by: hit.by ?? null });
    }
    return out;
  });
  let n = 0;
  for (const a of arrived) if (await noteNewMaterial(ctx, a.id, a.by)) n++;
  return n;
}

/** closeUnconfirmed: answered cases with no confirmation within `closeAnsweredAfterDays` are closed. */
export async function sweepCloseAnswered(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const { stale, days } = await ctx.db.read(async (tx) => {
    const days = (await getPricing(tx)).closeAnsweredAfterDays;
    const cutoff = new Date(now.getTime() - days * 86_400_000);
    const rows = await tx
      .select({ c: caseTable })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .where(and(eq(caseTable.status, "answered"), lte(caseQueueState.answeredAt, cutoff)))
      .all();
    return { stale: rows.map((r) => r.c), days };
  });
  let n = 0;
  for (const c of stale) {
    try {
      await perform(ctx, async (tx, fx) => {
        const row = await transition(tx, {
          caseId: c.id,
          from: "answered",
          to: "closed",
          actorId: null,
          type: "closed_unconfirmed",
          at: now,
          data: { days },
        });
        const to = [...(await shopRecipients(tx, row)), ...(row.expertId ? [row.expertId] : [])];
        fx.push(
          { kind: "announce", caseId: c.id },
          { kind: "notify", to, notice: notices.closedUnconfirmed(noticeCase(row), days) },
        );
      });
      n++;
    } catch (err) {
      if ((err as { status?: number }).status !== 409) throw err;
    }
  }
  return n;
}

/**
 * Money left behind by an interrupted server or payment service: answered cases whose hold was not
 * captured are captured now; ended cases (refunded, withdrawn) whose hold is still on are released.
 */
export async function sweepOutstandingMoney(ctx: AppContext): Promise<number> {
  const rows = await ctx.db.read(async (tx) =>
    tx
      .select({ caseId: caseTable.id, status: caseTable.status })
      .from(caseTable)
      .innerJoin(caseQueueState, eq(caseQueueState.caseId, caseTable.id))
      .innerJoin(payment, eq(payment.id, caseQueueState.paymentId))
      .where(
        and(
          inArray(caseTable.status, ["answered", "resolved", "closed", "refunded", "withdrawn"]),
          eq(payment.status, "authorized"),
        ),
      )
      .all(),
  );
  for (const r of rows) {
    const ended = r.status === "refunded" || r.status === "withdrawn";
    await runEffects(ctx, [
      ended ? { kind: "returnMoney", caseId: r.caseId, reason: "abandoned" } : { kind: "capture", caseId: r.caseId },
    ]);
  }
  return rows.length;
}

/** Every queue sweep, in the order they run. */
export async function runQueueSweeps(ctx: AppContext): Promise<Record<string, number>> {
  return {
    newMaterial: await sweepNewMaterial(ctx),
    deadlines: await sweepDeadlines(ctx),
    warnings: await sweepDeadlineWarnings(ctx),
    widen: await sweepWidenOffers(ctx),
    closeAnswered: await sweepCloseAnswered(ctx),
    money: await sweepOutstandingMoney(ctx),
  };
}

/** The workflow's sweeps for server/services/background.ts (registered in server/index.ts). */
export const workflowSweeps: readonly Sweep[] = [
  { name: "queue", everyMs: 30_000, run: (ctx) => runQueueSweeps(ctx) },
  { name: "payouts", everyMs: 24 * 3600_000, run: async (ctx) => (await runPayouts(ctx, null)).length },
];

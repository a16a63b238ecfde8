/**
 * What a workflow command leaves to do once its unit has committed: notices (stored, pushed,
 * mailed), live "case changed" messages, the money (capture, release, giving it back, expiring a
 * replaced checkout) and the casebook publication. Nothing of this runs inside a transaction; a
 * payment call's answer is applied in a unit of its own (server/payments) with the workflow's
 * reaction, which may add further effects — they run in the same loop.
 *
 *   const { result, after } = await perform(ctx, async (tx, fx) => { …; fx.push(…); return row; });
 */
import type { AppContext } from "../context";
import type { Tx } from "../db/client";
import { notify } from "../services/notifications";
import { publishCaseToCasebook } from "../services/casebook";
import { abandonCheckout, captureHold, giveMoneyBack, releaseHold } from "../payments/holds";
import { currentPayment, getPayment } from "../payments/store";
import { announceCaseChange } from "./records";
import { paymentReactor } from "./payment-reactions";
import { onCaseResolved } from "./hooks";
import { schema } from "../db/client";
import { and, eq } from "drizzle-orm";
import type { AfterCommit, Effect } from "./effect";

export type { AfterCommit, Effect };

/** Runs `body` in one write unit, then its effects; answers the body's result and what the effects did. */
export async function perform<T>(
  ctx: AppContext,
  body: (tx: Tx, fx: Effect[]) => Promise<T>,
): Promise<{ result: T; after: AfterCommit }> {
  const fx: Effect[] = [];
  const result = await ctx.db.write(async (tx) => body(tx, fx));
  const after = await runEffects(ctx, fx);
  return { result, after };
}

/** Runs effects in order (and those they lead to); a failing one is logged and the rest still run. */
export async function runEffects(ctx: AppContext, effects: Effect[]): Promise<AfterCommit> {
  const queue = [...effects];
  const after: AfterCommit = {};
  const announced = new Set<string>();
  while (queue.length) {
    const e = queue.shift()!;
    if (e.kind === "announce") {
      if (!announced.has(e.caseId)) announceCaseChange(ctx, e.caseId);
      announced.add(e.caseId);
      continue;
    }
    try {
      await runOne(ctx, e, queue, after);
    } catch (err) {
      ctx.logger.error({ err, effect: e.kind }, "a follow-up of a committed change failed");
      if (e.kind === "returnMoney")
        after.moneyBack = { outcome: "nothing", payment: undefined, why: "Giving the money back failed.", error: err };
      if (e.kind === "capture") after.captured = false;
    }
  }
  return after;
}

async function runOne(
  ctx: AppContext,
  e: Exclude<Effect, { kind: "announce" }>,
  queue: Effect[],
  after: AfterCommit,
): Promise<void> {
  const react = paymentReactor(queue);
  switch (e.kind) {
    case "notify":
      return notify(ctx, e.to, e.notice);
    case "capture": {
      const p = await ctx.db.read(async (tx) => currentPayment(tx, e.caseId));
      after.captured = p ? (await captureHold(ctx, p, react)).captured : false;
      return;
    }
    case "release": {
      const p = await ctx.db.read(async (tx) => getPayment(tx, e.paymentId));
      if (p) await releaseHold(ctx, p, e.reason, react);
      return;
    }
    case "returnMoney": {
      const p = await ctx.db.read(async (tx) => currentPayment(tx, e.caseId));
      after.moneyBack = p
        ? await giveMoneyBack(ctx, p, e.reason, react, e.note)
        : { outcome: "nothing", payment: undefined, why: "There is no payment on this case." };
      return;
    }
    case "expireCheckout": {
      const p = await ctx.db.read(async (tx) => getPayment(tx, e.paymentId));
      if (p) await abandonCheckout(ctx, p, e.why);
      return;
    }
    case "releaseStrayHolds": {
      const stray = await ctx.db.read(async (tx) => {
        const current = await currentPayment(tx, e.caseId);
        const held = await tx
          .select()
          .from(schema.payment)
          .where(and(eq(schema.payment.caseId, e.caseId), eq(schema.payment.status, "authorized")))
          .all();
        return held.filter((p) => p.id !== current?.id);
      });
      for (const p of stray) await releaseHold(ctx, p, "duplicate", react);
      return;
    }
    case "publish":
      await publishCaseToCasebook(ctx, e.caseId);
      for (const hook of [...onCaseResolved]) {
        try {
          await hook(ctx, e.caseId);
        } catch (err) {
          ctx.logger.error({ err, caseId: e.caseId }, "case-resolved hook failed");
        }
      }
      return;
  }
}

/**
 * The expert's answer and the shop's confirmation.
 *   claimed → answered (answer written; the held payment is captured, never after capture_before)
 *   answered → resolved (fix confirmed; the casebook hook runs)
 *   answered → claimed (not fixed, the first time: back to the same expert for a second round)
 *   answered → closed (not fixed a second time, or no confirmation within N days)
 */
import fs from "node:fs";
import { fileURLToPath } from "node:url";
import { and, asc, eq, lte } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { announceCase, caseLabel, loadCase, queueState, shopRecipients, transitionCase, updateQueueState, type CaseRow } from "./case-state";
import { notify } from "./notifications";
import { captureCasePayment } from "./payments-flow";
import { getPricing } from "./pricing";
import { assertQueueAction, expertProfileOf } from "../auth/policies/queue";
import { ignitionSafetyNote, type AnswerInput } from "../../shared/schemas/queue";
import type { AnswerView, ConfirmationView } from "../../shared/views/queue";
export type { AnswerView, ConfirmationView };

const { caseAnswer, caseConfirmation } = schema;

// ---------------------------------------------------------------------------------------------
// Casebook hook

export type CaseResolvedHook = (ctx: AppContext, caseId: string) => Promise<void> | void;

/**
 * Functions run after a case is resolved (fix confirmed). The casebook registers its publisher
 * here: `onCaseResolved.push((ctx, id) => publishCaseToCasebook(ctx, id))`. While the list is empty,
 * `publishCaseToCasebook(ctx, caseId)` from server/services/casebook.ts is called when that file exists.
 */
export const onCaseResolved: CaseResolvedHook[] = [];

export async function runCaseResolvedHooks(ctx: AppContext, caseId: string): Promise<void> {
  const hooks = [...onCaseResolved];
  if (hooks.length === 0) {
    const here = fileURLToPath(import.meta.url);
    const candidate = [here.replace(/answers\.(ts|js)$/, "casebook.ts"), here.replace(/answers\.(ts|js)$/, "casebook.js")].find((f) => f !== here && fs.existsSync(f));
    if (candidate) {
      try {
        const specifier = "./casebook";
        const mod = (await import(/* @vite-ignore */ specifier)) as { publishCaseToCasebook?: CaseResolvedHook };
        if (typeof mod.publishCaseToCasebook === "function") hooks.push(mod.publishCaseToCasebook);
      } catch (err) {
        ctx.logger.error({ err, caseId }, "casebook module could not be loaded");
      }
    }
  }
  for (const h of hooks) {
    try {
      await h(ctx, caseId);
    } catch (err) {
      ctx.logger.error({ err, caseId }, "case-resolved hook failed");
    }
  }
}

// ---------------------------------------------------------------------------------------------
// Answer



/** POST /api/cases/:id/answer */
export async function answerCase(ctx: AppContext, actor: Actor, caseId: string, input: AnswerInput): Promise<{ case: CaseRow; answer: AnswerView; captured: boolean }> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "answer");
  const answerId = crypto.randomUUID();
  const { row, round } = ctx.db.transaction(
    (tx) => {
      const qs = queueState(tx, caseId, now);
      const round = qs.notFixedCount + 1;
      const { row } = transitionCase(tx, {
        caseId,
        from: "claimed",
        to: "answered",
        actorId: actor.id,
        type: "answered",
        at: now,
        data: { answerId, round },
        where: eq(schema.caseTable.expertId, actor.id),
      });
      tx.insert(caseAnswer).values({ id: answerId, caseId, expertId: actor.id, round, ...input, createdAt: now }).run();
      updateQueueState(tx, caseId, now, { answeredAt: now });
      return { row, round };
    },
    { behavior: "immediate" },
  );
  announceCase(ctx, caseId);
  // Capture the held payment (first answer only; a second round was already paid for).
  const cap = await captureCasePayment(ctx, caseId);
  await notify(ctx, shopRecipients(ctx.db, row), {
    kind: "case_answered",
    caseId,
    title: `Answer ready: ${caseLabel(row)}`,
    paragraphs: [
      `${actor.name} has answered${round > 1 ? " again" : ""}. Diagnosis: ${input.diagnosis.slice(0, 300)}`,
      `Recommended fix: ${input.recommendedFix.slice(0, 300)}`,
      ignitionSafetyNote,
      "Once you have tried the fix, tell us whether it worked.",
    ],
    link: `/cases/${caseId}`,
    actionLabel: "Read the answer",
  });
  return {
    case: row,
    captured: cap.captured,
    answer: { id: answerId, round, expertId: actor.id, expertName: actor.name, ...input, safetyNote: ignitionSafetyNote, createdAt: now.toISOString() },
  };
}

/** POST /api/cases/:id/confirm */
export async function confirmCase(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  input: { fixed: boolean; note?: string; rating?: number },
): Promise<{ case: CaseRow; outcome: "resolved" | "reopened" | "closed" }> {
  const now = ctx.now();
  const c = loadCase(ctx.db, caseId);
  assertQueueAction(actor, c, expertProfileOf(ctx.db, actor), "confirm");
  const result = ctx.db.transaction(
    (tx) => {
      const qs = queueState(tx, caseId, now);
      const last = tx.select().from(caseAnswer).where(eq(caseAnswer.caseId, caseId)).orderBy(asc(caseAnswer.round)).all().at(-1);
      const cur = loadCase(tx, caseId)!;
      tx.insert(caseConfirmation)
        .values({ id: crypto.randomUUID(), caseId, answerId: last?.id ?? null, userId: actor.id, expertId: cur.expertId, fixed: input.fixed, note: input.note || null, rating: input.rating ?? null, createdAt: now })
        .run();
      const data = { fixed: input.fixed, note: input.note || null, rating: input.rating ?? null };
      if (input.fixed) {
        return { row: transitionCase(tx, { caseId, from: "answered", to: "resolved", actorId: actor.id, type: "fix_confirmed", at: now, data }).row, outcome: "resolved" as const };
      }
      if (qs.notFixedCount === 0) {
        updateQueueState(tx, caseId, now, { notFixedCount: 1, answeredAt: null });
        return { row: transitionCase(tx, { caseId, from: "answered", to: "claimed", actorId: actor.id, type: "not_fixed", at: now, data }).row, outcome: "reopened" as const };
      }
      updateQueueState(tx, caseId, now, { notFixedCount: qs.notFixedCount + 1 });
      return { row: transitionCase(tx, { caseId, from: "answered", to: "closed", actorId: actor.id, type: "not_fixed_closed", at: now, data }).row, outcome: "closed" as const };
    },
    { behavior: "immediate" },
  );
  announceCase(ctx, caseId);
  const { row, outcome } = result;
  const label = caseLabel(row);
  if (row.expertId) {
    if (outcome === "resolved") {
      await notify(ctx, [row.expertId], { kind: "case_resolved", caseId, title: `Fix confirmed: ${label}`, paragraphs: ["The shop confirmed your fix worked.", ...(input.rating ? [`Rating: ${input.rating} of 5.`] : [])], link: `/cases/${caseId}` });
    } else if (outcome === "reopened") {
      await notify(ctx, [row.expertId], {
        kind: "not_fixed",
        caseId,
        title: `Not fixed yet: ${label}`,
        paragraphs: [`The shop says the fix did not work${input.note ? `: “${input.note}”` : "."}`, "The case is back with you for a second answer."],
        link: `/cases/${caseId}`,
      });
    } else {
      await notify(ctx, [row.expertId], { kind: "case_closed", caseId, title: `Closed without a fix: ${label}`, paragraphs: ["The shop reported the second answer did not fix the car either; the case is closed."], link: `/cases/${caseId}`, mail: false });
    }
  }
  if (outcome === "resolved") await runCaseResolvedHooks(ctx, caseId);
  return { case: row, outcome };
}

export function listAnswers(ctx: AppContext, caseId: string): { answers: AnswerView[]; confirmations: ConfirmationView[] } {
  const answers = ctx.db
    .select({ a: caseAnswer, name: schema.user.name })
    .from(caseAnswer)
    .leftJoin(schema.user, eq(schema.user.id, caseAnswer.expertId))
    .where(eq(caseAnswer.caseId, caseId))
    .orderBy(asc(caseAnswer.round), asc(caseAnswer.createdAt))
    .all()
    .map(({ a, name }) => ({
      id: a.id,
      round: a.round,
      expertId: a.expertId,
      expertName: name ?? null,
      diagnosis: a.diagnosis,
      rootCause: a.rootCause,
      recommendedFix: a.recommendedFix,
      testsToConfirm: a.testsToConfirm,
      safetyNote: ignitionSafetyNote,
      createdAt: a.createdAt.toISOString(),
    }));
  const confirmations = ctx.db
    .select({ c: caseConfirmation, name: schema.user.name })
    .from(caseConfirmation)
    .leftJoin(schema.user, eq(schema.user.id, caseConfirmation.userId))
    .where(eq(caseConfirmation.caseId, caseId))
    .orderBy(asc(caseConfirmation.createdAt))
    .all()
    .map(({ c, name }) => ({ id: c.id, answerId: c.answerId, fixed: c.fixed, note: c.note, rating: c.rating, userName: name ?? null, createdAt: c.createdAt.toISOString() }));
  return { answers, confirmations };
}

/** Answered cases with no confirmation within `closeAnsweredAfterDays` are closed. */
export async function sweepCloseAnswered(ctx: AppContext): Promise<number> {
  const now = ctx.now();
  const days = getPricing(ctx.db, now).closeAnsweredAfterDays;
  const cutoff = new Date(now.getTime() - days * 86_400_000);
  const stale = ctx.db
    .select({ c: schema.caseTable })
    .from(schema.caseTable)
    .innerJoin(schema.caseQueueState, eq(schema.caseQueueState.caseId, schema.caseTable.id))
    .where(and(eq(schema.caseTable.status, "answered"), lte(schema.caseQueueState.answeredAt, cutoff)))
    .all();
  let n = 0;
  for (const { c } of stale) {
    try {
      ctx.db.transaction((tx) => transitionCase(tx, { caseId: c.id, from: "answered", to: "closed", actorId: null, type: "closed_unconfirmed", at: now, data: { days } }));
    } catch (err) {
      if ((err as { status?: number }).status === 409) continue;
      throw err;
    }
    n++;
    announceCase(ctx, c.id);
    await notify(ctx, [...shopRecipients(ctx.db, c), ...(c.expertId ? [c.expertId] : [])], {
      kind: "case_closed",
      caseId: c.id,
      title: `Closed: ${caseLabel(c)}`,
      paragraphs: [`No confirmation came within ${days} days of the answer, so the case has been closed.`],
      link: `/cases/${c.id}`,
      mail: false,
    });
  }
  return n;
}


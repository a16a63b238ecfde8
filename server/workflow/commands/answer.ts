/**
 * answer (the claiming expert): claimed → answered; after the commit the held payment is captured
 * (the first answer only: a second round was paid for already), never at or after its
 * capture_before. confirm (the shop): answered → resolved (the casebook publishes it), → claimed
 * (not fixed, the first time: back to the same expert), → closed (not fixed a second time).
 */
import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import { schema, type Tx } from "../../db/client";
import { notices } from "../../services/notices";
import { ignitionSafetyNote, type AnswerInput, type ConfirmInput } from "../../../shared/schemas/queue";
import type { AnsweredView, ConfirmedView } from "../../../shared/views/workflow";
import type { Effect } from "../effect";
import { perform } from "../effects";
import { noticeCase } from "../notice-data";
import { queueState, shopRecipients, transition, updateQueueState, type CaseRow } from "../records";
import { authorized } from "./authorized";

const { caseAnswer, caseConfirmation } = schema;

/** POST /api/cases/:id/answer */
export async function answerCase(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  input: AnswerInput,
): Promise<AnsweredView> {
  const answerId = crypto.randomUUID();
  const now = ctx.now();
  const { result, after } = await perform(ctx, async (tx, fx) => {
    await authorized(tx, actor, "answer", caseId);
    const round = (await queueState(tx, caseId, now)).notFixedCount + 1;
    const row = await transition(tx, {
      caseId,
      from: "claimed",
      to: "answered",
      actorId: actor.id,
      type: "answered",
      at: now,
      data: { answerId, round },
    });
    await tx
      .insert(caseAnswer)
      .values({ id: answerId, caseId, expertId: actor.id, round, ...input, createdAt: now })
      .run();
    await updateQueueState(tx, caseId, now, { answeredAt: now });
    fx.push({ kind: "announce", caseId }, { kind: "capture", caseId });
    fx.push({
      kind: "notify",
      to: await shopRecipients(tx, row),
      notice: notices.caseAnswered(noticeCase(row), actor.name, round, input),
    });
    return { row, round };
  });
  const answer = {
    id: answerId,
    round: result.round,
    expertId: actor.id,
    expertName: actor.name,
    ...input,
    safetyNote: ignitionSafetyNote,
    createdAt: now.toISOString(),
  };
  return { id: result.row.id, status: result.row.status as "answered", captured: after.captured ?? false, answer };
}

type Outcome = ConfirmedView["outcome"];

async function confirmInUnit(
  tx: Tx,
  fx: Effect[],
  actor: Actor,
  caseId: string,
  input: ConfirmInput,
  now: Date,
): Promise<{ row: CaseRow; outcome: Outcome }> {
  const { c } = await authorized(tx, actor, "confirm", caseId);
  const qs = await queueState(tx, caseId, now);
  const last = (
    await tx.select().from(caseAnswer).where(eq(caseAnswer.caseId, caseId)).orderBy(asc(caseAnswer.round)).all()
  ).at(-1);
  const note = input.note || null;
  const rating = input.rating ?? null;
  await tx
    .insert(caseConfirmation)
    .values({
      id: crypto.randomUUID(),
      caseId,
      answerId: last?.id ?? null,
      userId: actor.id,
      expertId: c.expertId,
      fixed: input.fixed,
      note,
      rating,
      createdAt: now,
    })
    .run();
  const data = { fixed: input.fixed, note, rating };
  const move = (to: "resolved" | "claimed" | "closed", type: string) =>
    transition(tx, { caseId, from: "answered", to, actorId: actor.id, type, at: now, data });
  let row: CaseRow;
  let outcome: Outcome;
  if (input.fixed) {
    [row, outcome] = [await move("resolved", "fix_confirmed"), "resolved"];
    fx.push({ kind: "publish", caseId });
  } else if (qs.notFixedCount === 0) {
    await updateQueueState(tx, caseId, now, { notFixedCount: 1, answeredAt: null });
    [row, outcome] = [await move("claimed", "not_fixed"), "reopened"];
  } else {
    await updateQueueState(tx, caseId, now, { notFixedCount: qs.notFixedCount + 1 });
    [row, outcome] = [await move("closed", "not_fixed_closed"), "closed"];
  }
  fx.unshift({ kind: "announce", caseId });
  if (row.expertId) {
    const n = noticeCase(row);
    const notice =
      outcome === "resolved"
        ? notices.fixConfirmed(n, input.rating)
        : outcome === "reopened"
          ? notices.notFixed(n, input.note)
          : notices.closedNotFixed(n);
    fx.unshift({ kind: "notify", to: [row.expertId], notice });
  }
  return { row, outcome };
}

/** POST /api/cases/:id/confirm */
export async function confirmCase(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  input: ConfirmInput,
): Promise<ConfirmedView> {
  const { result } = await perform(ctx, (tx, fx) => confirmInUnit(tx, fx, actor, caseId, input, ctx.now()));
  return { id: result.row.id, status: result.row.status as ConfirmedView["status"], outcome: result.outcome };
}

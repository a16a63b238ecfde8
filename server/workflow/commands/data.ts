/**
 * More data: the expert asks (claimed → needs_data; asking again while waiting updates the request),
 * the deadline pauses; the shop answers explicitly (dataSent) or by adding a capture or photo
 * (materialArrives, after an upload or from the sweep) → claimed, the deadline moved on by the time
 * spent waiting.
 */
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import type { Tx } from "../../db/client";
import { notices } from "../../services/notices";
import type { Effect } from "../effect";
import { perform } from "../effects";
import { noticeCase } from "../notice-data";
import { getCaseRow, queueState, shopRecipients, transition, updateQueueState, type CaseRow } from "../records";
import { authorized } from "./authorized";

/** POST /api/cases/:id/request-data */
export async function requestData(ctx: AppContext, actor: Actor, caseId: string, message: string): Promise<CaseRow> {
  const { result } = await perform(ctx, async (tx, fx) => {
    const now = ctx.now();
    const { c } = await authorized(tx, actor, "requestData", caseId);
    const waiting = c.status === "needs_data";
    const row = await transition(tx, {
      caseId,
      from: ["claimed", "needs_data"],
      to: "needs_data",
      actorId: actor.id,
      type: "data_requested",
      at: now,
      data: { message },
    });
    const since = waiting ? ((await queueState(tx, caseId, now)).needsDataSince ?? now) : now;
    await updateQueueState(tx, caseId, now, { needsDataSince: since, needsDataMessage: message });
    fx.push(
      { kind: "announce", caseId },
      {
        kind: "notify",
        to: await shopRecipients(tx, row),
        notice: notices.dataRequested(noticeCase(row), actor.name, message),
      },
    );
    return row;
  });
  return result;
}

/** needs_data → claimed, inside a unit; null when the case was not waiting for data. */
async function dataReceivedInUnit(
  tx: Tx,
  fx: Effect[],
  caseId: string,
  actorId: string | null,
  how: "sent" | "uploaded",
  now: Date,
  note?: string,
): Promise<CaseRow | null> {
  const c = await getCaseRow(tx, caseId);
  if (!c || c.status !== "needs_data") return null;
  const qs = await queueState(tx, caseId, now);
  const pausedMs = qs.needsDataSince ? Math.max(0, now.getTime() - qs.needsDataSince.getTime()) : 0;
  const deadlineAt = c.deadlineAt ? new Date(c.deadlineAt.getTime() + pausedMs) : null;
  const row = await transition(tx, {
    caseId,
    from: "needs_data",
    to: "claimed",
    actorId,
    type: how === "sent" ? "data_sent" : "data_uploaded",
    at: now,
    data: { pausedMinutes: Math.round(pausedMs / 60_000), ...(note ? { note } : {}) },
    set: { deadlineAt },
  });
  await updateQueueState(tx, caseId, now, { needsDataSince: null, deadlineWarnedAt: null });
  fx.push({ kind: "announce", caseId });
  if (row.expertId)
    fx.push({ kind: "notify", to: [row.expertId], notice: notices.dataSent(noticeCase(row), how, note) });
  return row;
}

/** POST /api/cases/:id/data-sent (the shop says the data is in). */
export async function markDataSent(ctx: AppContext, actor: Actor, caseId: string, note?: string): Promise<CaseRow> {
  const { result } = await perform(ctx, async (tx, fx) => {
    await authorized(tx, actor, "dataSent", caseId);
    return (await dataReceivedInUnit(tx, fx, caseId, actor.id, "sent", ctx.now(), note))!;
  });
  return result;
}

/**
 * For the uploads: call after a trace or photo was added to a case. A case waiting for more data
 * goes back to its expert (materialArrives); any other case is left as it is.
 */
export async function noteNewMaterial(
  ctx: AppContext,
  caseId: string,
  actorId: string | null,
): Promise<CaseRow | null> {
  return (await perform(ctx, (tx, fx) => dataReceivedInUnit(tx, fx, caseId, actorId, "uploaded", ctx.now()))).result;
}

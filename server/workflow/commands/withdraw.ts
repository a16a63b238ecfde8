/**
 * withdraw (the shop): draft, awaiting payment or queued (before any claim) → withdrawn. After the
 * commit the money goes back: the hold is released, or the open checkout expired; the experts the
 * case was offered to are told in the app.
 */
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import type { Tx } from "../../db/client";
import { notices } from "../../services/notices";
import { currentPayment, presentPayment } from "../../payments/store";
import type { WithdrawnView } from "../../../shared/views/workflow";
import type { Effect } from "../effect";
import { perform } from "../effects";
import { noticeCase } from "../notice-data";
import { transition, type CaseRow } from "../records";
import { offeredExperts } from "../routing";
import { authorized } from "./authorized";

async function withdrawInUnit(tx: Tx, fx: Effect[], actor: Actor, caseId: string, now: Date): Promise<CaseRow> {
  const { c } = await authorized(tx, actor, "withdraw", caseId);
  const row = await transition(tx, {
    caseId,
    from: ["draft", "awaiting_payment", "queued"],
    to: "withdrawn",
    actorId: actor.id,
    type: "withdrawn",
    at: now,
  });
  fx.push({ kind: "announce", caseId });
  if (c.status !== "draft") {
    fx.push({ kind: "returnMoney", caseId, reason: "requested_by_customer" }, { kind: "releaseStrayHolds", caseId });
  }
  if (c.status === "queued")
    fx.push({ kind: "notify", to: await offeredExperts(tx, caseId), notice: notices.caseWithdrawn(noticeCase(row)) });
  return row;
}

/** POST /api/cases/:id/withdraw */
export async function withdrawCase(ctx: AppContext, actor: Actor, caseId: string): Promise<WithdrawnView> {
  const { result: row } = await perform(ctx, (tx, fx) => withdrawInUnit(tx, fx, actor, caseId, ctx.now()));
  const p = await ctx.db.read(async (tx) => currentPayment(tx, caseId));
  return { id: row.id, status: "withdrawn", payment: p ? presentPayment(p) : null };
}

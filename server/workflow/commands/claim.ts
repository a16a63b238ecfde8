/**
 * claim (approved experts), release (the claiming expert or an admin) and reassign (admins). Units
 * run one at a time and the status is moved with `UPDATE … WHERE status = <current>`, so of experts
 * claiming at once exactly one wins; the others get 409 `already_claimed`.
 */
import { eq } from "drizzle-orm";
import type { AppContext } from "../../context";
import type { Actor } from "../../auth/session";
import { schema, type Tx } from "../../db/client";
import { conflict } from "../../http/errors";
import { notices } from "../../services/notices";
import type { CaseStatus } from "../../../shared/domain/case-status";
import type { Effect } from "../effect";
import { perform } from "../effects";
import { noticeCase } from "../notice-data";
import { shopRecipients, transition, type CaseRow } from "../records";
import { openCaseCounts } from "../routing";
import { authorized } from "./authorized";

async function assertUnderLimit(tx: Tx, expertId: string, max: number, who: "you" | "the expert"): Promise<void> {
  const open = (await openCaseCounts(tx)).get(expertId) ?? 0;
  if (open < max) return;
  const code = who === "you" ? "load_limit" : "expert_unavailable";
  const message =
    who === "you"
      ? `You have ${open} open case${open === 1 ? "" : "s"} and your limit is ${max}. Answer or release one first.`
      : `That expert already has ${open} open case${open === 1 ? "" : "s"} (limit ${max}).`;
  throw conflict(code, message, { openCases: open, maxOpenCases: max });
}

/** POST /api/cases/:id/claim */
export async function claimCase(ctx: AppContext, actor: Actor, caseId: string): Promise<CaseRow> {
  const { result } = await perform(ctx, async (tx, fx) => {
    const now = ctx.now();
    const { profile } = await authorized(tx, actor, "claim", caseId);
    await assertUnderLimit(tx, actor.id, profile!.maxOpenCases, "you");
    const set = { expertId: actor.id, claimedAt: now };
    const row = await transition(tx, {
      caseId,
      from: "queued",
      to: "claimed",
      actorId: actor.id,
      type: "claimed",
      at: now,
      set,
      code: "already_claimed",
    });
    fx.push(
      { kind: "announce", caseId },
      { kind: "notify", to: await shopRecipients(tx, row), notice: notices.caseClaimed(noticeCase(row), actor.name) },
    );
    return row;
  });
  return result;
}

/** POST /api/cases/:id/release: back to the queue (claimed → queued), the deadline unchanged. */
export async function releaseCase(ctx: AppContext, actor: Actor, caseId: string): Promise<CaseRow> {
  const { result } = await perform(ctx, async (tx, fx) => {
    const now = ctx.now();
    await authorized(tx, actor, "release", caseId);
    const set = { expertId: null, claimedAt: null };
    const row = await transition(tx, {
      caseId,
      from: "claimed",
      to: "queued",
      actorId: actor.id,
      type: "released",
      at: now,
      set,
    });
    fx.push(
      { kind: "announce", caseId },
      { kind: "notify", to: await shopRecipients(tx, row), notice: notices.caseReleased(noticeCase(row)) },
    );
    return row;
  });
  return result;
}

async function reassignInUnit(
  tx: Tx,
  fx: Effect[],
  actor: Actor,
  caseId: string,
  expertId: string,
  now: Date,
  reason?: string,
): Promise<CaseRow> {
  const { c } = await authorized(tx, actor, "reassign", caseId);
  const target = await tx
    .select({ p: schema.expertProfile, deactivatedAt: schema.user.deactivatedAt })
    .from(schema.expertProfile)
    .innerJoin(schema.user, eq(schema.user.id, schema.expertProfile.userId))
    .where(eq(schema.expertProfile.userId, expertId))
    .get();
  if (!target || target.p.status !== "approved" || target.deactivatedAt) {
    throw conflict("expert_unavailable", "Cases go to approved, active experts only.");
  }
  if (c.expertId === expertId) throw conflict("expert_unavailable", "The case is already with that expert.");
  await assertUnderLimit(tx, expertId, target.p.maxOpenCases, "the expert");
  const status = c.status as CaseStatus;
  const data = { from: c.expertId, to: expertId, reason: reason || null };
  const row = await transition(tx, {
    caseId,
    from: status,
    to: status,
    actorId: actor.id,
    type: "reassigned",
    at: now,
    data,
    set: { expertId, claimedAt: now },
  });
  fx.push(
    { kind: "announce", caseId },
    { kind: "notify", to: [expertId], notice: notices.caseReassignedToYou(noticeCase(row)) },
  );
  if (c.expertId) fx.push({ kind: "notify", to: [c.expertId], notice: notices.caseReassignedAway(noticeCase(row)) });
  return row;
}

/**
 * POST /api/admin/cases/:id/reassign: the desk hands a claimed case to another approved expert;
 * the reason is kept in the case's history.
 */
export async function reassignCase(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  expertId: string,
  reason?: string,
): Promise<CaseRow> {
  return (await perform(ctx, (tx, fx) => reassignInUnit(tx, fx, actor, caseId, expertId, ctx.now(), reason))).result;
}

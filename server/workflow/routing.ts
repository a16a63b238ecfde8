/**
 * Routing a paid case to experts. A case is offered first to available, approved experts whose
 * systems include the case's system and whose makes include its make (or who take any make), who
 * are under their limit of open cases. They are ranked by
 *   1. match: the make named in their profile before "any make";
 *   2. load: the lower share of their open-case limit in use first;
 *   3. record: more resolved cases and a better average rating first.
 * The first `firstWaveSize` are offered. When nobody matches, or nobody claims within
 * `widenAfterMinutes`, the offer widens to every approved, available expert.
 */
import { eq, inArray, sql } from "drizzle-orm";
import { schema, type Tx } from "../db/client";
import { getPricing } from "../services/pricing";
import { recordCaseEvent, updateQueueState, type CaseRow } from "./records";

const { caseTable, caseOffer, expertProfile } = schema;
/** States in which a case counts against its expert's open-case limit. */
export const OPEN_FOR_EXPERT = ["claimed", "needs_data"] as const;

const norm = (s: string | null | undefined) => (s ?? "").trim().toLowerCase();

export interface Candidate {
  expertId: string;
  name: string;
  available: boolean;
  systemMatch: boolean;
  makeMatch: "named" | "any" | "none";
  openCases: number;
  maxOpenCases: number;
  resolved: number;
  rating: number | null;
  /** eligible for the first wave */
  eligible: boolean;
  score: number;
}

export async function openCaseCounts(tx: Tx): Promise<Map<string, number>> {
  const rows = await tx
    .select({ expertId: caseTable.expertId, n: sql<number>`count(*)` })
    .from(caseTable)
    .where(inArray(caseTable.status, [...OPEN_FOR_EXPERT]))
    .groupBy(caseTable.expertId)
    .all();
  return new Map(rows.filter((r) => r.expertId).map((r) => [r.expertId!, Number(r.n)]));
}

export async function expertRecords(tx: Tx): Promise<Map<string, { resolved: number; rating: number | null }>> {
  const resolved = await tx
    .select({ expertId: caseTable.expertId, n: sql<number>`count(*)` })
    .from(caseTable)
    .where(eq(caseTable.status, "resolved"))
    .groupBy(caseTable.expertId)
    .all();
  const ratings = await tx
    .select({
      expertId: schema.caseConfirmation.expertId,
      avg: sql<number | null>`avg(${schema.caseConfirmation.rating})`,
    })
    .from(schema.caseConfirmation)
    .where(sql`${schema.caseConfirmation.rating} is not null`)
    .groupBy(schema.caseConfirmation.expertId)
    .all();
  const out = new Map<string, { resolved: number; rating: number | null }>();
  for (const r of resolved) if (r.expertId) out.set(r.expertId, { resolved: Number(r.n), rating: null });
  for (const r of ratings) {
    if (!r.expertId) continue;
    const cur = out.get(r.expertId) ?? { resolved: 0, rating: null };
    out.set(r.expertId, { ...cur, rating: r.avg == null ? null : Number(r.avg) });
  }
  return out;
}

/** Every approved, active expert, ranked for this case (eligible ones first). */
export async function rankExperts(tx: Tx, c: Pick<CaseRow, "system" | "make">): Promise<Candidate[]> {
  const profiles = (
    await tx
      .select({ p: expertProfile, name: schema.user.name, deactivated: schema.user.deactivatedAt })
      .from(expertProfile)
      .innerJoin(schema.user, eq(schema.user.id, expertProfile.userId))
      .where(eq(expertProfile.status, "approved"))
      .all()
  ).filter((r) => !r.deactivated);
  const loads = await openCaseCounts(tx);
  const records = await expertRecords(tx);
  const make = norm(c.make);
  const list: Candidate[] = profiles.map(({ p, name }) => {
    const systemMatch = !!c.system && (p.systems ?? []).includes(c.system);
    const makes = (p.makes ?? []).map(norm).filter(Boolean);
    const makeMatch: Candidate["makeMatch"] =
      makes.length === 0 ? "any" : make && makes.includes(make) ? "named" : "none";
    const openCases = loads.get(p.userId) ?? 0;
    const rec = records.get(p.userId) ?? { resolved: 0, rating: null };
    const eligible = p.available && systemMatch && makeMatch !== "none" && openCases < p.maxOpenCases;
    // An informative score with the same order as the comparator below.
    const load = Math.round((1 - openCases / Math.max(1, p.maxOpenCases)) * 100);
    const score = (makeMatch === "named" ? 2 : 1) * 1000 + load + Math.min(rec.resolved, 50) + (rec.rating ?? 3);
    const { available, maxOpenCases } = p;
    return {
      expertId: p.userId,
      name,
      available,
      systemMatch,
      makeMatch,
      openCases,
      maxOpenCases,
      ...rec,
      eligible,
      score,
    };
  });
  const recordScore = (x: Candidate) => x.resolved * ((x.rating ?? 3) / 5);
  const share = (x: Candidate) => x.openCases / Math.max(1, x.maxOpenCases);
  list.sort(
    (a, b) =>
      Number(b.eligible) - Number(a.eligible) ||
      Number(b.makeMatch === "named") - Number(a.makeMatch === "named") ||
      share(a) - share(b) ||
      recordScore(b) - recordScore(a) ||
      a.expertId.localeCompare(b.expertId),
  );
  return list;
}

async function insertOffers(tx: Tx, caseId: string, picks: Candidate[], wave: number, now: Date): Promise<string[]> {
  const offered: string[] = [];
  const rows = await tx.select({ e: caseOffer.expertId }).from(caseOffer).where(eq(caseOffer.caseId, caseId)).all();
  const existing = new Set(rows.map((r) => r.e));
  let rank = existing.size;
  for (const cand of picks) {
    if (existing.has(cand.expertId)) continue;
    rank += 1;
    const reason = {
      systemMatch: cand.systemMatch,
      makeMatch: cand.makeMatch,
      openCases: cand.openCases,
      resolved: cand.resolved,
      rating: cand.rating,
    };
    await tx
      .insert(caseOffer)
      .values({ caseId, expertId: cand.expertId, wave, rank, score: cand.score, reason, offeredAt: now })
      .onConflictDoNothing()
      .run();
    offered.push(cand.expertId);
  }
  return offered;
}

/** Offers for a case that just entered the queue. Returns the experts offered; nobody matching → widened at once. */
export async function createOffers(tx: Tx, c: CaseRow, now: Date): Promise<string[]> {
  const pricing = await getPricing(tx);
  const first = (await rankExperts(tx, c)).filter((x) => x.eligible).slice(0, pricing.firstWaveSize);
  const offered = await insertOffers(tx, c.id, first, 1, now);
  await recordCaseEvent(tx, {
    caseId: c.id,
    actorId: null,
    type: "offered",
    at: now,
    data: { wave: 1, experts: offered.length },
  });
  if (offered.length === 0) return widenOffers(tx, c, now, "no matching expert available");
  return offered;
}

/** The second wave: every approved, available expert not offered yet. */
export async function widenOffers(tx: Tx, c: CaseRow, now: Date, why: string): Promise<string[]> {
  const everyone = (await rankExperts(tx, c)).filter((x) => x.available);
  const offered = await insertOffers(tx, c.id, everyone, 2, now);
  await updateQueueState(tx, c.id, now, { offersWidenedAt: now });
  await recordCaseEvent(tx, {
    caseId: c.id,
    actorId: null,
    type: "offers_widened",
    at: now,
    data: { experts: offered.length, why },
  });
  return offered;
}

/** The experts a case was offered to. */
export async function offeredExperts(tx: Tx, caseId: string): Promise<string[]> {
  return (await tx.select({ e: caseOffer.expertId }).from(caseOffer).where(eq(caseOffer.caseId, caseId)).all()).map(
    (r) => r.e,
  );
}

/**
 * The casebook: publishing resolved cases as anonymised entries, reading them (with a view
 * count), helpful votes, moderation (hide, edit) and an expert's record; similar cases by
 * waveform pattern. Search itself is in casebook-search.ts (a worker thread).
 *
 * Publishing is called by the answers service once a fix is confirmed (its case-resolved hook
 * loads this module and calls `publishCaseToCasebook`). It is idempotent: a case is published
 * once; a failure is logged and never undoes the confirmation.
 */
import { and, desc, eq, inArray, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import type { Db } from "../db/client";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { casebookPolicy, type CasebookEntryForPolicy } from "../auth/policies/casebook";
import { notFound } from "../http/errors";
import { scrubText } from "../../shared/domain/anonymise";
import { ignitionSafetyNote } from "../../shared/schemas/queue";
import type {
  CasebookEditInput,
  CasebookEntryBody,
  CasebookEntryView,
  CasebookTrace,
  ExpertCasebookRecord,
  SimilarCase,
  SimilarCasesResult,
} from "../../shared/schemas/casebook";
import { anonymiseCase, describeCodes, type CasebookEntryInput } from "./anonymise";
import { facetKey, facetTags, vehicleLabel } from "./casebook-search-engine";
import { casePattern, entryPattern, FEATURE_VERSION, hasWaveformFeatures, patternVector, similarIndex, similarityReasons, vectorToBlob } from "./similar";
import { listTraces } from "./traces";

export type CasebookEntryRow = typeof schema.casebookEntry.$inferSelect;
const { casebookEntry, casebookVote, casebookView } = schema;

export type { CasebookEntryInput } from "./anonymise";

// ---------------------------------------------------------------------------------------------
// Writing

function vehicleLine(v: CasebookEntryInput["vehicle"]): string {
  return [v.year, v.make, v.model, v.engine, v.fuel, v.transmission].filter((x) => x != null && String(x).trim() !== "").join(" ");
}

function firstSentence(s: string, max = 90): string {
  const t = s.replace(/\s+/g, " ").trim();
  const m = /^(.+?[.!?])(\s|$)/.exec(t);
  const one = m ? m[1].replace(/[.!?]$/, "") : t;
  return one.length <= max ? one : one.slice(0, max - 1).replace(/\s+\S*$/, "") + "…";
}

/** The entry's title: the vehicle and the root cause in a few words. */
export function entryTitle(e: Pick<CasebookEntryInput, "vehicle" | "rootCause" | "diagnosis">): string {
  const v = [e.vehicle.year, e.vehicle.make, e.vehicle.model, e.vehicle.engine].filter((x) => x != null && String(x).trim() !== "").join(" ");
  const cause = firstSentence(e.rootCause || e.diagnosis || "");
  return v ? (cause ? `${v}: ${cause}` : v) : cause || "Casebook entry";
}

/** Generic scrubbing for text that did not come through anonymiseCase (admin edits, imports). */
const generic = (s: string | null | undefined) => scrubText(s ?? "", { givenNames: false });

interface BuiltRow {
  row: typeof casebookEntry.$inferInsert;
  vector: { version: number; vector: Buffer; pattern: Record<string, unknown>; kinds: string } | null;
}

function buildRow(input: CasebookEntryInput, rev: number, now: Date, scrub: boolean): BuiltRow {
  const s = scrub ? generic : (x: string | null | undefined) => x ?? "";
  const id = input.id ?? crypto.randomUUID();
  const codes = [...new Set((input.codes ?? []).map((c) => String(c).trim().toUpperCase()).filter(Boolean))];
  const described = describeCodes(codes);
  const vehicle = {
    year: input.vehicle.year ?? null,
    make: input.vehicle.make ?? null,
    model: input.vehicle.model ?? null,
    engine: input.vehicle.engine ?? null,
    fuel: input.vehicle.fuel ?? null,
    transmission: input.vehicle.transmission ?? null,
    mileage: input.vehicle.mileage ?? null,
    mileageUnit: input.vehicle.mileageUnit ?? null,
    vinModel: input.vehicle.vinModel ?? null,
  };
  const body: CasebookEntryBody = {
    vehicle,
    complaint: s(input.complaint),
    symptoms: (input.symptoms ?? []).map((x) => s(x)),
    conditions: input.conditions ?? {},
    codes: described,
    system: input.system ?? null,
    testsDone: s(input.testsDone),
    partsReplaced: s(input.partsReplaced),
    answer: { diagnosis: s(input.diagnosis), rootCause: s(input.rootCause), fix: s(input.fix), testsToConfirm: s(input.testsToConfirm), round: input.round ?? 1 },
    outcome: { confirmed: input.confirmed ?? true, note: s(input.outcomeNote), rating: input.rating ?? null },
    traces: input.traces ?? [],
    annotations: input.annotations ?? [],
    comparison: input.comparison ?? null,
  };
  const facets = { make: vehicle.make, model: vehicle.model, year: vehicle.year, engine: vehicle.engine, system: body.system, codes, confirmed: body.outcome.confirmed };
  const row: typeof casebookEntry.$inferInsert = {
    id,
    caseId: input.caseId ?? null,
    expertId: input.expertId ?? null,
    title: s(input.title ?? entryTitle({ vehicle, rootCause: body.answer.rootCause, diagnosis: body.answer.diagnosis })),
    ...indexedText(body),
    tags: facetTags(facets),
    make: vehicle.make,
    makeKey: facetKey(vehicle.make),
    model: vehicle.model,
    modelKey: facetKey(vehicle.model),
    year: vehicle.year,
    engine: vehicle.engine,
    engineKey: facetKey(vehicle.engine),
    system: body.system,
    codeList: codes,
    confirmed: body.outcome.confirmed,
    rating: body.outcome.rating,
    body: body as unknown as Record<string, unknown>,
    hidden: false,
    rev,
    publishedAt: input.publishedAt ?? now,
    updatedAt: input.publishedAt ?? now,
  };
  let vector: BuiltRow["vector"] = null;
  if (input.pattern) {
    const v = patternVector(input.pattern);
    vector = { version: FEATURE_VERSION, vector: vectorToBlob(v), pattern: input.pattern as unknown as Record<string, unknown>, kinds: input.pattern.kinds.join(" ") };
  }
  return { row, vector };
}

/** The seven indexed text columns from an entry body. */
function indexedText(body: CasebookEntryBody) {
  const v = body.vehicle;
  const cond = Object.values(body.conditions ?? {})
    .flat()
    .filter((x) => typeof x === "string")
    .join(" ");
  return {
    vehicle: [vehicleLine(v), v.vinModel ? v.vinModel.replace(/\*/g, " ") : ""].filter(Boolean).join(" "),
    complaint: body.complaint,
    symptoms: [body.symptoms.join(", "), cond, body.testsDone, body.partsReplaced].filter(Boolean).join(". "),
    codes: body.codes.map((c) => (c.description ? `${c.code} ${c.description}` : c.code)).join("; "),
    diagnosis: [body.answer.diagnosis, body.answer.testsToConfirm, body.outcome.note].filter(Boolean).join(" "),
    rootCause: body.answer.rootCause,
    fix: body.answer.fix,
  };
}

function nextRev(db: Db): number {
  return ((db.$client.prepare("SELECT coalesce(max(rev), 0) FROM casebook_entry").pluck().get() as number) ?? 0) + 1;
}

/**
 * Inserts entries in one transaction (FTS kept in step by the triggers, vectors alongside). For
 * the demo seed and imports: pass anonymised entries; their text still goes through the generic
 * scrub (e-mail addresses, phone numbers, VINs) unless `scrub: false` (the benchmark's synthetic
 * data). Entries are inserted oldest first, so doc ids follow the publishing order.
 */
export function insertCasebookEntries(db: Db, inputs: readonly CasebookEntryInput[], opts: { now?: Date; scrub?: boolean } = {}): string[] {
  const now = opts.now ?? new Date();
  const sorted = [...inputs].sort((a, b) => (a.publishedAt?.getTime() ?? now.getTime()) - (b.publishedAt?.getTime() ?? now.getTime()));
  const c = db.$client;
  const cols = [
    "id", "case_id", "expert_id", "title", "vehicle", "complaint", "symptoms", "codes", "diagnosis", "root_cause", "fix", "tags",
    "make", "make_key", "model", "model_key", "year", "engine", "engine_key", "system", "code_list", "confirmed", "rating", "body",
    "hidden", "rev", "published_at", "updated_at",
  ];
  const ins = c.prepare(`INSERT INTO casebook_entry (${cols.join(", ")}) VALUES (${cols.map(() => "?").join(", ")})`);
  const vec = c.prepare("INSERT OR REPLACE INTO casebook_vector (entry_id, version, vector, pattern, kinds) VALUES (?, ?, ?, ?, ?)");
  const ids: string[] = [];
  c.transaction(() => {
    let rev = nextRev(db);
    for (const input of sorted) {
      const { row, vector } = buildRow(input, rev++, now, opts.scrub !== false);
      ins.run(
        row.id, row.caseId, row.expertId, row.title, row.vehicle, row.complaint, row.symptoms, row.codes, row.diagnosis, row.rootCause, row.fix, row.tags,
        row.make, row.makeKey, row.model, row.modelKey, row.year, row.engine, row.engineKey, row.system, JSON.stringify(row.codeList), row.confirmed ? 1 : 0, row.rating ?? null,
        JSON.stringify(row.body), 0, row.rev, (row.publishedAt as Date).getTime(), (row.updatedAt as Date).getTime(),
      );
      if (vector) vec.run(row.id, vector.version, vector.vector, JSON.stringify(vector.pattern), vector.kinds);
      ids.push(row.id);
    }
  })();
  return ids;
}

/**
 * Publishes a resolved case as an anonymised entry (once; later calls return the same entry).
 * Returns the entry id, or null when the case is not resolved or has no answer.
 */
export function publishCaseToCasebook(ctx: AppContext, caseId: string): string | null {
  const existing = ctx.db.select({ id: casebookEntry.id }).from(casebookEntry).where(eq(casebookEntry.caseId, caseId)).get();
  if (existing) return existing.id;
  const entryId = crypto.randomUUID();
  const input = anonymiseCase(ctx, caseId, entryId);
  if (!input) return null;
  try {
    // already scrubbed with the case's names; the generic pass again is harmless
    insertCasebookEntries(ctx.db, [{ ...input, publishedAt: ctx.now() }], { now: ctx.now() });
  } catch (err) {
    // two confirmations racing: the unique case_id keeps one
    const again = ctx.db.select({ id: casebookEntry.id }).from(casebookEntry).where(eq(casebookEntry.caseId, caseId)).get();
    if (again) return again.id;
    throw err;
  }
  ctx.logger.info({ caseId, entryId }, "case published to the casebook");
  return entryId;
}

// ---------------------------------------------------------------------------------------------
// Reading

export function getEntryRow(db: Db, id: string): CasebookEntryRow | undefined {
  return db.select().from(casebookEntry).where(eq(casebookEntry.id, id)).get();
}

const forPolicy = (r: CasebookEntryRow): CasebookEntryForPolicy => ({ hidden: r.hidden, expertId: r.expertId });

function helpfulCounts(db: Db, ids: string[]): Map<string, number> {
  if (ids.length === 0) return new Map();
  const rows = db
    .select({ id: casebookVote.entryId, n: sql<number>`count(*)` })
    .from(casebookVote)
    .where(inArray(casebookVote.entryId, ids))
    .groupBy(casebookVote.entryId)
    .all();
  return new Map(rows.map((r) => [r.id, Number(r.n)]));
}

/** Adds helpful-vote counts to search hits (one query for the page). */
export function withHelpfulCounts<T extends { id: string }>(db: Db, hits: T[]): (T & { helpfulCount: number })[] {
  const counts = helpfulCounts(db, hits.map((h) => h.id));
  return hits.map((h) => ({ ...h, helpfulCount: counts.get(h.id) ?? 0 }));
}

export function presentEntry(db: Db, actor: Actor, r: CasebookEntryRow): CasebookEntryView {
  const body = r.body as unknown as CasebookEntryBody;
  const helpfulCount = helpfulCounts(db, [r.id]).get(r.id) ?? 0;
  const viewCount = Number(db.select({ n: sql<number>`count(*)` }).from(casebookView).where(eq(casebookView.entryId, r.id)).get()?.n ?? 0);
  const voted = !!db.select({ x: casebookVote.entryId }).from(casebookVote).where(and(eq(casebookVote.entryId, r.id), eq(casebookVote.userId, actor.id))).get();
  const abilities = casebookPolicy.abilities(actor, forPolicy(r));
  return {
    ...body,
    id: r.id,
    title: r.title,
    publishedAt: r.publishedAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
    helpfulCount,
    viewCount,
    voted,
    hidden: r.hidden,
    hiddenReason: abilities.moderate ? r.hiddenReason : null,
    safetyNote: ignitionSafetyNote,
    abilities: { vote: abilities.vote, moderate: abilities.moderate },
  };
}

/** GET /api/casebook/:id — the entry, counting the reader once. */
export function readEntry(ctx: AppContext, actor: Actor, id: string): CasebookEntryView {
  const r = getEntryRow(ctx.db, id);
  if (!r) throw notFound("Casebook entry");
  casebookPolicy.authorize(actor, "read", forPolicy(r));
  const now = ctx.now();
  ctx.db
    .insert(casebookView)
    .values({ entryId: r.id, userId: actor.id, firstAt: now, lastAt: now, count: 1 })
    .onConflictDoUpdate({ target: [casebookView.entryId, casebookView.userId], set: { lastAt: now, count: sql`${casebookView.count} + 1` } })
    .run();
  return presentEntry(ctx.db, actor, r);
}

/** POST /api/casebook/:id/vote — one helpful vote per user (repeating it changes nothing). */
export function voteEntry(ctx: AppContext, actor: Actor, id: string, helpful: boolean): { helpfulCount: number; voted: boolean } {
  const r = getEntryRow(ctx.db, id);
  if (!r) throw notFound("Casebook entry");
  casebookPolicy.authorize(actor, "vote", forPolicy(r));
  if (helpful) {
    ctx.db.insert(casebookVote).values({ entryId: r.id, userId: actor.id, createdAt: ctx.now() }).onConflictDoNothing().run();
  } else {
    ctx.db.delete(casebookVote).where(and(eq(casebookVote.entryId, r.id), eq(casebookVote.userId, actor.id))).run();
  }
  return { helpfulCount: helpfulCounts(ctx.db, [r.id]).get(r.id) ?? 0, voted: helpful };
}

/** PATCH /api/admin/casebook/:id — hide/unhide and edit the text; the FTS triggers follow. */
export function editEntry(ctx: AppContext, actor: Actor, id: string, patch: CasebookEditInput): CasebookEntryView {
  const r = getEntryRow(ctx.db, id);
  if (!r) throw notFound("Casebook entry");
  casebookPolicy.authorize(actor, "moderate", forPolicy(r));
  const now = ctx.now();
  const body = structuredClone(r.body) as unknown as CasebookEntryBody;
  if (patch.complaint !== undefined) body.complaint = generic(patch.complaint);
  if (patch.diagnosis !== undefined) body.answer.diagnosis = generic(patch.diagnosis);
  if (patch.rootCause !== undefined) body.answer.rootCause = generic(patch.rootCause);
  if (patch.fix !== undefined) body.answer.fix = generic(patch.fix);
  if (patch.testsToConfirm !== undefined) body.answer.testsToConfirm = generic(patch.testsToConfirm);
  const set: Partial<typeof casebookEntry.$inferInsert> = { updatedAt: now, editedBy: actor.id };
  const textChanged = ["complaint", "diagnosis", "rootCause", "fix", "testsToConfirm"].some((k) => (patch as Record<string, unknown>)[k] !== undefined);
  if (textChanged) Object.assign(set, { body: body as unknown as Record<string, unknown>, ...indexedText(body) });
  if (patch.title !== undefined) set.title = generic(patch.title);
  if (patch.hidden !== undefined) {
    set.hidden = patch.hidden;
    set.hiddenAt = patch.hidden ? now : null;
    set.hiddenBy = patch.hidden ? actor.id : null;
    set.hiddenReason = patch.hidden ? (patch.hiddenReason ?? r.hiddenReason ?? null) : null;
  } else if (patch.hiddenReason !== undefined) set.hiddenReason = patch.hiddenReason;
  ctx.db.transaction((tx) => {
    const rev = (ctx.db.$client.prepare("SELECT coalesce(max(rev), 0) FROM casebook_entry").pluck().get() as number) + 1;
    tx.update(casebookEntry)
      .set({ ...set, rev })
      .where(eq(casebookEntry.id, r.id))
      .run();
  });
  ctx.logger.info({ entryId: r.id, by: actor.id, fields: Object.keys(patch) }, "casebook entry moderated");
  return presentEntry(ctx.db, actor, getEntryRow(ctx.db, r.id)!);
}

/** Hidden entries for the moderation list, newest first. */
export function listHiddenEntries(ctx: AppContext, actor: Actor) {
  casebookPolicy.authorize(actor, "moderate", { hidden: true, expertId: null });
  return ctx.db
    .select({ id: casebookEntry.id, title: casebookEntry.title, hiddenReason: casebookEntry.hiddenReason, hiddenAt: casebookEntry.hiddenAt })
    .from(casebookEntry)
    .where(eq(casebookEntry.hidden, true))
    .orderBy(desc(casebookEntry.hiddenAt))
    .limit(200)
    .all();
}

/** An expert's casebook record: visible entries of theirs, confirmed ones, helpful votes and readers. */
export function expertRecord(ctx: AppContext, actor: Actor, expertId: string): ExpertCasebookRecord {
  const expert = ctx.db.select({ id: schema.user.id, role: schema.user.role }).from(schema.user).where(eq(schema.user.id, expertId)).get();
  if (!expert || expert.role !== "expert") throw notFound("Expert");
  const entries = ctx.db
    .select({ id: casebookEntry.id, confirmed: casebookEntry.confirmed })
    .from(casebookEntry)
    .where(and(eq(casebookEntry.expertId, expertId), eq(casebookEntry.hidden, false)))
    .orderBy(desc(casebookEntry.publishedAt))
    .all();
  const ids = entries.map((e) => e.id);
  let helpfulVotes = 0;
  let views = 0;
  if (ids.length) {
    helpfulVotes = Number(ctx.db.select({ n: sql<number>`count(*)` }).from(casebookVote).innerJoin(casebookEntry, eq(casebookEntry.id, casebookVote.entryId)).where(and(eq(casebookEntry.expertId, expertId), eq(casebookEntry.hidden, false))).get()?.n ?? 0);
    views = Number(ctx.db.select({ n: sql<number>`count(*)` }).from(casebookView).innerJoin(casebookEntry, eq(casebookEntry.id, casebookView.entryId)).where(and(eq(casebookEntry.expertId, expertId), eq(casebookEntry.hidden, false))).get()?.n ?? 0);
  }
  const own = actor.id === expertId || actor.role === "admin";
  return { expertId, entries: entries.length, confirmed: entries.filter((e) => e.confirmed).length, helpfulVotes, views, ...(own ? { entryIds: ids } : {}) };
}

// ---------------------------------------------------------------------------------------------
// Traces of an entry

/** The published trace of an entry, when the actor may read the entry. */
export function entryTrace(ctx: AppContext, actor: Actor, entryId: string, traceId: string): { entry: CasebookEntryRow; trace: CasebookTrace } {
  const r = getEntryRow(ctx.db, entryId);
  if (!r || !casebookPolicy.can(actor, "read", forPolicy(r))) throw notFound("Trace");
  const t = ((r.body as unknown as CasebookEntryBody).traces ?? []).find((x) => x.id === traceId);
  if (!t) throw notFound("Trace");
  return { entry: r, trace: t };
}

/** The casebook entry a trace was published with (as the policy sees it), or null when it was not. */
export function publishedEntryOfTrace(db: Db, traceId: string): CasebookEntryForPolicy | null {
  const row = db
    .select({ e: casebookEntry })
    .from(schema.trace)
    .innerJoin(casebookEntry, eq(casebookEntry.caseId, schema.trace.caseId))
    .where(eq(schema.trace.id, traceId))
    .get();
  if (!row) return null;
  const published = ((row.e.body as unknown as CasebookEntryBody).traces ?? []).some((t) => t.id === traceId);
  return published ? forPolicy(row.e) : null;
}

// ---------------------------------------------------------------------------------------------
// Similar cases

/** GET /api/cases/:id/similar — the entries nearest to this case's waveform pattern, with reasons. */
export function similarForCase(ctx: AppContext, caseId: string, limit = 5): SimilarCasesResult {
  const traces = listTraces(ctx, caseId);
  const pattern = casePattern(traces.map((t) => ({ settings: t.settings, analysis: t.analysis })));
  const v = patternVector(pattern);
  if (!hasWaveformFeatures(v)) {
    return { caseId, note: traces.length ? "None of this case's traces has been measured yet." : "Add a trace to compare this case with the casebook.", results: [] };
  }
  const own = ctx.db.select({ id: casebookEntry.id }).from(casebookEntry).where(eq(casebookEntry.caseId, caseId)).get();
  const ix = similarIndex(ctx.db);
  const matches = ix.nearest(v, limit, own ? new Set([own.id]) : undefined);
  if (matches.length === 0) return { caseId, note: "The casebook has no entries with measured traces yet.", results: [] };
  const rows = ctx.db
    .select({ id: casebookEntry.id, title: casebookEntry.title, year: casebookEntry.year, make: casebookEntry.make, model: casebookEntry.model, engine: casebookEntry.engine, codeList: casebookEntry.codeList, rootCause: casebookEntry.rootCause, hidden: casebookEntry.hidden })
    .from(casebookEntry)
    .where(inArray(casebookEntry.id, matches.map((m) => m.entryId)))
    .all();
  const byId = new Map(rows.map((r) => [r.id, r]));
  const helpful = helpfulCounts(ctx.db, matches.map((m) => m.entryId));
  const results: SimilarCase[] = [];
  for (const m of matches) {
    const r = byId.get(m.entryId);
    if (!r || r.hidden) continue;
    const p = entryPattern(ctx.db, m.entryId);
    results.push({
      id: r.id,
      title: r.title,
      vehicle: vehicleLabel(r),
      codes: r.codeList,
      rootCause: r.rootCause,
      similarity: m.similarity,
      distance: m.distance,
      reasons: p ? similarityReasons(pattern, p) : [],
      helpfulCount: helpful.get(r.id) ?? 0,
    });
  }
  return { caseId, note: null, results };
}


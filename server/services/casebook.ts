/**
 * The casebook: publishing resolved cases as anonymised entries, reading them (with a view
 * count), helpful votes, moderation (hide, edit) and an expert's record; similar cases by
 * waveform pattern. Search itself is in casebook-search.ts (a worker thread).
 *
 * Publishing is called by the workflow once a fix is confirmed (an effect after its commit). It is
 * idempotent: a case is published once; a failure is logged and never undoes the confirmation.
 */
import { and, asc, desc, eq, inArray, sql } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Db, type Tx } from "../db/client";
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
import {
  casePattern,
  entryPattern,
  FEATURE_VERSION,
  hasWaveformFeatures,
  patternVector,
  similarIndex,
  similarityReasons,
  vectorToBlob,
} from "./similar";

export type CasebookEntryRow = typeof schema.casebookEntry.$inferSelect;
const { casebookEntry, casebookVote, casebookView, casebookVector } = schema;

export type { CasebookEntryInput } from "./anonymise";

// ---------------------------------------------------------------------------------------------
// Writing

function vehicleLine(v: CasebookEntryInput["vehicle"]): string {
  return [v.year, v.make, v.model, v.engine, v.fuel, v.transmission]
    .filter((x) => x != null && String(x).trim() !== "")
    .join(" ");
}

function firstSentence(s: string, max = 90): string {
  const t = s.replace(/\s+/g, " ").trim();
  const m = /^(.+?[.!?])(\s|$)/.exec(t);
  const one = m ? m[1].replace(/[.!?]$/, "") : t;
  return one.length <= max ? one : one.slice(0, max - 1).replace(/\s+\S*$/, "") + "…";
}

/** The entry's title: the vehicle and the root cause in a few words. */
export function entryTitle(e: Pick<CasebookEntryInput, "vehicle" | "rootCause" | "diagnosis">): string {
  const v = [e.vehicle.year, e.vehicle.make, e.vehicle.model, e.vehicle.engine]
    .filter((x) => x != null && String(x).trim() !== "")
    .join(" ");
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
    answer: {
      diagnosis: s(input.diagnosis),
      rootCause: s(input.rootCause),
      fix: s(input.fix),
      testsToConfirm: s(input.testsToConfirm),
      round: input.round ?? 1,
    },
    outcome: { confirmed: input.confirmed ?? true, note: s(input.outcomeNote), rating: input.rating ?? null },
    traces: input.traces ?? [],
    annotations: input.annotations ?? [],
    comparison: input.comparison ?? null,
  };
  const facets = {
    make: vehicle.make,
    model: vehicle.model,
    year: vehicle.year,
    engine: vehicle.engine,
    system: body.system,
    codes,
    confirmed: body.outcome.confirmed,
  };
  const row: typeof casebookEntry.$inferInsert = {
    id,
    caseId: input.caseId ?? null,
    expertId: input.expertId ?? null,
    title: s(
      input.title ?? entryTitle({ vehicle, rootCause: body.answer.rootCause, diagnosis: body.answer.diagnosis }),
    ),
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
    vector = {
      version: FEATURE_VERSION,
      vector: vectorToBlob(v),
      pattern: input.pattern as unknown as Record<string, unknown>,
      kinds: input.pattern.kinds.join(" "),
    };
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

/** The next revision of the casebook (entries changed since a rev are what the search and the similar index reload). */
async function nextRev(tx: Tx): Promise<number> {
  const r = await tx
    .select({ rev: sql<number>`coalesce(max(${casebookEntry.rev}), 0)` })
    .from(casebookEntry)
    .get();
  return Number(r?.rev ?? 0) + 1;
}

/** Rows per INSERT statement in a bulk insert (28 columns each: well under SQLite's variable limit). */
const INSERT_CHUNK = 200;

/**
 * Inserts entries in one transaction (FTS kept in step by the triggers, vectors alongside). For
 * the demo seed and imports: pass anonymised entries; their text still goes through the generic
 * scrub (e-mail addresses, phone numbers, VINs) unless `scrub: false` (the benchmark's synthetic
 * data). Entries are inserted oldest first, so doc ids follow the publishing order.
 */
export async function insertCasebookEntries(
  db: Db,
  inputs: readonly CasebookEntryInput[],
  opts: { now?: Date; scrub?: boolean } = {},
): Promise<string[]> {
  return db.write((tx) => insertEntriesIn(tx, inputs, opts));
}

/** insertCasebookEntries inside the caller's write unit. */
export async function insertEntriesIn(
  tx: Tx,
  inputs: readonly CasebookEntryInput[],
  opts: { now?: Date; scrub?: boolean } = {},
): Promise<string[]> {
  const now = opts.now ?? new Date();
  const at = (e: CasebookEntryInput) => e.publishedAt?.getTime() ?? now.getTime();
  const sorted = [...inputs].sort((a, b) => at(a) - at(b));
  let rev = await nextRev(tx);
  const built = sorted.map((input) => buildRow(input, rev++, now, opts.scrub !== false));
  for (let i = 0; i < built.length; i += INSERT_CHUNK) {
    const chunk = built.slice(i, i + INSERT_CHUNK);
    await tx
      .insert(casebookEntry)
      .values(chunk.map((b) => b.row))
      .run();
    const vectors = chunk.filter((b) => b.vector).map((b) => ({ entryId: b.row.id!, ...b.vector! }));
    if (vectors.length) {
      await tx
        .insert(casebookVector)
        .values(vectors)
        .onConflictDoUpdate({
          target: casebookVector.entryId,
          set: {
            version: sql`excluded.version`,
            vector: sql`excluded.vector`,
            pattern: sql`excluded.pattern`,
            kinds: sql`excluded.kinds`,
          },
        })
        .run();
    }
  }
  return built.map((b) => b.row.id!);
}

/**
 * Publishes a resolved case as an anonymised entry (once; later calls return the same entry).
 * Returns the entry id, or null when the case is not resolved or has no answer. Read, anonymised
 * and written in one unit; of two nodes publishing the same case at once, the unique case_id
 * (checked first, inside the unit) keeps one.
 */
export async function publishCaseToCasebook(ctx: AppContext, caseId: string): Promise<string | null> {
  const now = ctx.now();
  const out = await ctx.db.write(async (tx) => {
    const existing = await tx
      .select({ id: casebookEntry.id })
      .from(casebookEntry)
      .where(eq(casebookEntry.caseId, caseId))
      .get();
    if (existing) return { id: existing.id, created: false };
    const entryId = crypto.randomUUID();
    const input = await anonymiseCase(tx, caseId, entryId);
    if (!input) return null;
    // already scrubbed with the case's names; the generic pass again is harmless
    await insertEntriesIn(tx, [{ ...input, publishedAt: now }], { now });
    return { id: entryId, created: true };
  });
  if (out?.created) ctx.logger.info({ caseId, entryId: out.id }, "case published to the casebook");
  return out?.id ?? null;
}

// ---------------------------------------------------------------------------------------------
// Reading

export async function getEntryRow(tx: Tx, id: string): Promise<CasebookEntryRow | undefined> {
  return tx.select().from(casebookEntry).where(eq(casebookEntry.id, id)).get();
}

const forPolicy = (r: CasebookEntryRow): CasebookEntryForPolicy => ({ hidden: r.hidden, expertId: r.expertId });

async function helpfulCounts(tx: Tx, ids: string[]): Promise<Map<string, number>> {
  if (ids.length === 0) return new Map();
  const rows = await tx
    .select({ id: casebookVote.entryId, n: sql<number>`count(*)` })
    .from(casebookVote)
    .where(inArray(casebookVote.entryId, ids))
    .groupBy(casebookVote.entryId)
    .all();
  return new Map(rows.map((r) => [r.id, Number(r.n)]));
}

/** Adds helpful-vote counts to search hits (one query for the page). */
export async function withHelpfulCounts<T extends { id: string }>(
  tx: Tx,
  hits: T[],
): Promise<(T & { helpfulCount: number })[]> {
  const counts = await helpfulCounts(
    tx,
    hits.map((h) => h.id),
  );
  return hits.map((h) => ({ ...h, helpfulCount: counts.get(h.id) ?? 0 }));
}

export async function presentEntry(tx: Tx, actor: Actor, r: CasebookEntryRow): Promise<CasebookEntryView> {
  const body = r.body as unknown as CasebookEntryBody;
  const helpfulCount = (await helpfulCounts(tx, [r.id])).get(r.id) ?? 0;
  const views = await tx
    .select({ n: sql<number>`count(*)` })
    .from(casebookView)
    .where(eq(casebookView.entryId, r.id))
    .get();
  const viewCount = Number(views?.n ?? 0);
  const mine = and(eq(casebookVote.entryId, r.id), eq(casebookVote.userId, actor.id));
  const voted = !!(await tx.select({ x: casebookVote.entryId }).from(casebookVote).where(mine).get());
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
export async function readEntry(ctx: AppContext, actor: Actor, id: string): Promise<CasebookEntryView> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    const r = await getEntryRow(tx, id);
    if (!r) throw notFound("Casebook entry");
    casebookPolicy.authorize(actor, "read", forPolicy(r));
    await tx
      .insert(casebookView)
      .values({ entryId: r.id, userId: actor.id, firstAt: now, lastAt: now, count: 1 })
      .onConflictDoUpdate({
        target: [casebookView.entryId, casebookView.userId],
        set: { lastAt: now, count: sql`${casebookView.count} + 1` },
      })
      .run();
    return presentEntry(tx, actor, r);
  });
}

/** POST /api/casebook/:id/vote — one helpful vote per user (repeating it changes nothing). */
export async function voteEntry(
  ctx: AppContext,
  actor: Actor,
  id: string,
  helpful: boolean,
): Promise<{ helpfulCount: number; voted: boolean }> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    const r = await getEntryRow(tx, id);
    if (!r) throw notFound("Casebook entry");
    casebookPolicy.authorize(actor, "vote", forPolicy(r));
    if (helpful) {
      await tx
        .insert(casebookVote)
        .values({ entryId: r.id, userId: actor.id, createdAt: now })
        .onConflictDoNothing()
        .run();
    } else {
      await tx
        .delete(casebookVote)
        .where(and(eq(casebookVote.entryId, r.id), eq(casebookVote.userId, actor.id)))
        .run();
    }
    return { helpfulCount: (await helpfulCounts(tx, [r.id])).get(r.id) ?? 0, voted: helpful };
  });
}

/** What a moderation patch changes in the entry's row. */
function moderationSet(r: CasebookEntryRow, patch: CasebookEditInput, actor: Actor, now: Date) {
  const body = structuredClone(r.body) as unknown as CasebookEntryBody;
  if (patch.complaint !== undefined) body.complaint = generic(patch.complaint);
  if (patch.diagnosis !== undefined) body.answer.diagnosis = generic(patch.diagnosis);
  if (patch.rootCause !== undefined) body.answer.rootCause = generic(patch.rootCause);
  if (patch.fix !== undefined) body.answer.fix = generic(patch.fix);
  if (patch.testsToConfirm !== undefined) body.answer.testsToConfirm = generic(patch.testsToConfirm);
  const set: Partial<typeof casebookEntry.$inferInsert> = { updatedAt: now, editedBy: actor.id };
  const textChanged = ["complaint", "diagnosis", "rootCause", "fix", "testsToConfirm"].some(
    (k) => (patch as Record<string, unknown>)[k] !== undefined,
  );
  if (textChanged) Object.assign(set, { body: body as unknown as Record<string, unknown>, ...indexedText(body) });
  if (patch.title !== undefined) set.title = generic(patch.title);
  if (patch.hidden !== undefined) {
    set.hidden = patch.hidden;
    set.hiddenAt = patch.hidden ? now : null;
    set.hiddenBy = patch.hidden ? actor.id : null;
    set.hiddenReason = patch.hidden ? (patch.hiddenReason ?? r.hiddenReason ?? null) : null;
  } else if (patch.hiddenReason !== undefined) set.hiddenReason = patch.hiddenReason;
  return set;
}

/** PATCH /api/admin/casebook/:id — hide/unhide and edit the text; the FTS triggers follow. */
export async function editEntry(
  ctx: AppContext,
  actor: Actor,
  id: string,
  patch: CasebookEditInput,
): Promise<CasebookEntryView> {
  const now = ctx.now();
  const view = await ctx.db.write(async (tx) => {
    const r = await getEntryRow(tx, id);
    if (!r) throw notFound("Casebook entry");
    casebookPolicy.authorize(actor, "moderate", forPolicy(r));
    const rev = await nextRev(tx);
    await tx
      .update(casebookEntry)
      .set({ ...moderationSet(r, patch, actor, now), rev })
      .where(eq(casebookEntry.id, r.id))
      .run();
    return presentEntry(tx, actor, (await getEntryRow(tx, r.id))!);
  });
  ctx.logger.info({ entryId: id, by: actor.id, fields: Object.keys(patch) }, "casebook entry moderated");
  return view;
}

/** Hidden entries for the moderation list, newest first. */
export async function listHiddenEntries(ctx: AppContext, actor: Actor) {
  casebookPolicy.authorize(actor, "moderate", { hidden: true, expertId: null });
  const cols = {
    id: casebookEntry.id,
    title: casebookEntry.title,
    hiddenReason: casebookEntry.hiddenReason,
    hiddenAt: casebookEntry.hiddenAt,
  };
  return ctx.db.read((tx) =>
    tx
      .select(cols)
      .from(casebookEntry)
      .where(eq(casebookEntry.hidden, true))
      .orderBy(desc(casebookEntry.hiddenAt))
      .limit(200)
      .all(),
  );
}

/** An expert's casebook record: visible entries of theirs, confirmed ones, helpful votes and readers. */
export async function expertRecord(ctx: AppContext, actor: Actor, expertId: string): Promise<ExpertCasebookRecord> {
  return ctx.db.read(async (tx) => {
    const { user } = schema;
    const expert = await tx.select({ id: user.id, role: user.role }).from(user).where(eq(user.id, expertId)).get();
    if (!expert || expert.role !== "expert") throw notFound("Expert");
    const visible = and(eq(casebookEntry.expertId, expertId), eq(casebookEntry.hidden, false));
    const entries = await tx
      .select({ id: casebookEntry.id, confirmed: casebookEntry.confirmed })
      .from(casebookEntry)
      .where(visible)
      .orderBy(desc(casebookEntry.publishedAt))
      .all();
    const ids = entries.map((e) => e.id);
    let helpfulVotes = 0;
    let views = 0;
    if (ids.length) {
      const votes = await tx
        .select({ n: sql<number>`count(*)` })
        .from(casebookVote)
        .innerJoin(casebookEntry, eq(casebookEntry.id, casebookVote.entryId))
        .where(visible)
        .get();
      const reads = await tx
        .select({ n: sql<number>`count(*)` })
        .from(casebookView)
        .innerJoin(casebookEntry, eq(casebookEntry.id, casebookView.entryId))
        .where(visible)
        .get();
      helpfulVotes = Number(votes?.n ?? 0);
      views = Number(reads?.n ?? 0);
    }
    const own = actor.id === expertId || actor.role === "admin";
    const confirmed = entries.filter((e) => e.confirmed).length;
    return { expertId, entries: entries.length, confirmed, helpfulVotes, views, ...(own ? { entryIds: ids } : {}) };
  });
}

// ---------------------------------------------------------------------------------------------
// Traces of an entry

/** The published trace of an entry, when the actor may read the entry. */
export async function entryTrace(
  ctx: AppContext,
  actor: Actor,
  entryId: string,
  traceId: string,
): Promise<{ entry: CasebookEntryRow; trace: CasebookTrace }> {
  const r = await ctx.db.read((tx) => getEntryRow(tx, entryId));
  if (!r || !casebookPolicy.can(actor, "read", forPolicy(r))) throw notFound("Trace");
  const t = ((r.body as unknown as CasebookEntryBody).traces ?? []).find((x) => x.id === traceId);
  if (!t) throw notFound("Trace");
  return { entry: r, trace: t };
}

/** The casebook entry a trace was published with (as the policy sees it), or null when it was not. */
export async function publishedEntryOfTrace(tx: Tx, traceId: string): Promise<CasebookEntryForPolicy | null> {
  const row = await tx
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
export async function similarForCase(ctx: AppContext, caseId: string, limit = 5): Promise<SimilarCasesResult> {
  const { trace } = schema;
  const traces = await ctx.db.read((tx) =>
    tx.select().from(trace).where(eq(trace.caseId, caseId)).orderBy(asc(trace.createdAt), asc(trace.id)).all(),
  );
  const pattern = casePattern(traces.map((t) => ({ settings: t.settings, analysis: t.analysis })));
  const v = patternVector(pattern);
  if (!hasWaveformFeatures(v)) {
    const note = traces.length
      ? "None of this case's traces has been measured yet."
      : "Add a trace to compare this case with the casebook.";
    return { caseId, note, results: [] };
  }
  const ix = await similarIndex(ctx.db);
  return ctx.db.read(async (tx) => {
    const own = await tx
      .select({ id: casebookEntry.id })
      .from(casebookEntry)
      .where(eq(casebookEntry.caseId, caseId))
      .get();
    const matches = ix.nearest(v, limit, own ? new Set([own.id]) : undefined);
    if (matches.length === 0)
      return { caseId, note: "The casebook has no entries with measured traces yet.", results: [] };
    const ids = matches.map((m) => m.entryId);
    const e = casebookEntry;
    const rows = await tx
      .select({
        id: e.id,
        title: e.title,
        year: e.year,
        make: e.make,
        model: e.model,
        engine: e.engine,
        codeList: e.codeList,
        rootCause: e.rootCause,
        hidden: e.hidden,
      })
      .from(e)
      .where(inArray(e.id, ids))
      .all();
    const byId = new Map(rows.map((r) => [r.id, r]));
    const helpful = await helpfulCounts(tx, ids);
    const results: SimilarCase[] = [];
    for (const m of matches) {
      const r = byId.get(m.entryId);
      if (!r || r.hidden) continue;
      const p = await entryPattern(tx, m.entryId);
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
  });
}

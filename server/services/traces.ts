import fs from "node:fs";
import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCanAddTrace } from "../auth/policies/traces";
import { badRequest, tooLarge } from "../http/errors";
import { parseTraceFile } from "../traces/parse-file";
import { openTraceData, storedChannels, writeTraceData, type TraceData } from "../traces/store";
import { TraceParseError, type ParsedTrace, type TraceWindow } from "../../shared/trace/types";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import type { TraceWindowQuery } from "../../shared/schemas/traces";
import type { StoredUpload } from "../uploads/multer";
import { analyzeStoredTrace } from "../uploads/analysis";
import { compareTraces, type ComparableResult } from "../../shared/analysis/compare";
import type { Comparison } from "../../shared/analysis/types";
import { announceCaseChange, getCaseRow, recordCaseEvent, touchCase, type CaseRow } from "../workflow/records";
import { cleanFileName } from "./photos";
import { contentInFlight, placeContentAddressed, relativeDataPath, removeStoredFile, resolveDataPath, storageLayout, type PlacedFile } from "./storage";

export type TraceRow = typeof schema.trace.$inferSelect;
const { trace } = schema;

export async function getTraceRow(ctx: AppContext, id: string): Promise<TraceRow | undefined> {
  return ctx.db.read((tx) => tx.select().from(trace).where(eq(trace.id, id)).get());
}

/** A case's traces, oldest first (inside the caller's unit). */
export async function tracesOfCase(tx: Tx, caseId: string): Promise<TraceRow[]> {
  return tx.select().from(trace).where(eq(trace.caseId, caseId)).orderBy(asc(trace.createdAt), asc(trace.id)).all();
}

export async function listTraces(ctx: AppContext, caseId: string): Promise<TraceRow[]> {
  return ctx.db.read((tx) => tracesOfCase(tx, caseId));
}

/** The JSON of a trace: its metadata (never the samples; those come from the window endpoint). */
export function presentTrace(t: TraceRow) {
  return {
    id: t.id,
    caseId: t.caseId,
    name: t.name,
    originalName: t.originalName,
    kind: t.kind,
    samples: t.samples,
    sampleRateHz: t.sampleRateHz,
    t0: t.t0,
    durationS: t.durationS,
    channels: t.channels,
    settings: t.settings,
    analysis: t.analysis ?? null,
    warnings: t.warnings ?? [],
    bytes: t.originalBytes,
    sha256: t.sha256,
    uploadedBy: t.uploadedBy,
    createdAt: t.createdAt,
    windowUrl: `/api/traces/${t.id}/window`,
    originalUrl: `/api/traces/${t.id}/original`,
  };
}

export function originalFilePath(ctx: AppContext, t: TraceRow): string {
  return resolveDataPath(ctx.env.dataDir, t.originalPath);
}

export function traceDataFilePath(ctx: AppContext, t: TraceRow): string {
  return resolveDataPath(ctx.env.dataDir, t.dataPath);
}

async function traceUsesContent(ctx: AppContext, sha256: string): Promise<boolean> {
  const row = await ctx.db.read((tx) => tx.select({ id: trace.id }).from(trace).where(eq(trace.sha256, sha256)).limit(1).get());
  return row !== undefined;
}

/** Removes a trace (draft only, checked by the policy): its row, its parsed data, and its original when no other trace uses it. */
export async function deleteTrace(ctx: AppContext, actor: Actor, t: TraceRow): Promise<void> {
  const now = ctx.now();
  await ctx.db.write(async (tx) => {
    await tx.delete(trace).where(eq(trace.id, t.id)).run();
    const data = { traceId: t.id, name: t.name };
    await recordCaseEvent(tx, { caseId: t.caseId, actorId: actor.id, type: "trace_deleted", at: now, data });
    await touchCase(tx, t.caseId, now);
  });
  forgetOpenTrace(traceDataFilePath(ctx, t));
  await removeStoredFile(traceDataFilePath(ctx, t));
  const original = originalFilePath(ctx, t);
  if (contentInFlight(original) === 0 && !(await traceUsesContent(ctx, t.sha256))) await removeStoredFile(original);
  announceCaseChange(ctx, t.caseId, now, "trace", t.id);
}

// ---------------------------------------------------------------------------------------------
// Upload

/** A parser refusal as an HTTP error: 413 for size, else 400 naming the line and the reason. */
export function parseRefusal(err: TraceParseError) {
  if (err.code === "too-large") return tooLarge(`The trace file is too large: ${err.message}.`);
  return badRequest("trace_unreadable", `The trace file was refused: ${err.message}.`, { reason: err.code, line: err.line });
}

/**
 * ANALYSIS CALL SITE (upload): shared/analysis analyzeTrace on the stored channels, run in a
 * worker thread (server/uploads/analysis.ts) so that seconds of measuring never stall other
 * requests. A failure of the analysis never refuses the upload (the trace is still worth
 * reviewing by eye): the trace is stored with analysis null and the failure is logged.
 */
async function analyzeAtUpload(ctx: AppContext, dataFile: string, settings: CaptureSettings): Promise<Record<string, unknown> | null> {
  try {
    return await analyzeStoredTrace(dataFile, settings);
  } catch (err) {
    ctx.logger.warn({ err }, "trace analysis failed; stored without analysis");
    return null;
  }
}

/**
 * Adds a trace to a case, all or nothing: streamed parse of the temp file (never the whole text
 * in memory; the parser yields between chunks) → analysis → parsed channels written under
 * data/traces → original moved to data/originals/<sha[0..2]>/<sha> → row and "trace_added" event
 * in one transaction (which checks the case again). Any failure removes what this upload created;
 * the route's finally removes the temp file.
 */
export async function addTrace(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  upload: StoredUpload,
  fields: { settings: CaptureSettings; name?: string },
): Promise<TraceRow> {
  const layout = storageLayout(ctx.env.dataDir);
  const id = crypto.randomUUID();
  const { settings } = fields;
  let dataFile: string | null = null;
  let placed: PlacedFile | null = null;
  let committed = false;
  try {
    let parsed: ParsedTrace | null;
    try {
      parsed = await parseTraceFile(upload.path, { sampleRateHz: settings.sampleRateHz, maxBytes: ctx.env.MAX_TRACE_BYTES });
    } catch (err) {
      if (err instanceof TraceParseError) throw parseRefusal(err);
      throw err;
    }
    await fs.promises.mkdir(layout.tracesDir, { recursive: true });
    dataFile = (await writeTraceData(layout.tracesDir, id, parsed)).path;
    const meta = {
      samples: parsed.samples,
      sampleRateHz: parsed.sampleRateHz,
      t0: parsed.t0,
      durationS: parsed.durationS,
      channels: storedChannels(parsed),
      warnings: parsed.warnings,
    };
    parsed = null; // the arrays are on disk now; let them go before the analysis reads them back
    const analysis = await analyzeAtUpload(ctx, dataFile, settings);
    placed = await placeContentAddressed(layout, layout.originalsDir, upload.path, upload.sha256);
    const originalName = cleanFileName(upload.originalname, "trace.csv");
    const name = fields.name || originalName;
    const now = ctx.now();
    const row: TraceRow = {
      id,
      caseId,
      uploadedBy: actor.id,
      name,
      kind: settings.kind,
      settings: settings as Record<string, unknown>,
      sha256: upload.sha256,
      originalBytes: upload.size,
      originalPath: placed.rel,
      dataPath: relativeDataPath(layout.dataDir, dataFile),
      ...meta,
      analysis,
      originalName,
      createdAt: now,
    };
    const stored = await ctx.db.write(async (tx) => {
      // The case may have moved on while the file was arriving and being parsed.
      assertCanAddTrace(actor, (await getCaseRow(tx, caseId)) as CaseRow | undefined);
      const inserted = await tx.insert(trace).values(row).returning().get();
      const data = { traceId: id, name, samples: row.samples };
      await recordCaseEvent(tx, { caseId, actorId: actor.id, type: "trace_added", at: now, data });
      await touchCase(tx, caseId, now);
      return inserted;
    });
    committed = true;
    announceCaseChange(ctx, caseId, now, "trace", id);
    return stored;
  } finally {
    if (!committed) {
      if (dataFile) await removeStoredFile(dataFile);
      if (placed && contentInFlight(placed.abs) <= 1 && !(await traceUsesContent(ctx, upload.sha256)))
        await removeStoredFile(placed.abs);
    }
    placed?.release();
  }
}

// ---------------------------------------------------------------------------------------------
// Window

/** Open trace data files, most recently used last (the pyramid is ~1/8 of the values' size). */
const openCache = new Map<string, Promise<TraceData>>();
const OPEN_CACHE_SIZE = 32;

function openCached(abs: string): Promise<TraceData> {
  let p = openCache.get(abs);
  if (p) {
    openCache.delete(abs);
    openCache.set(abs, p);
    return p;
  }
  p = openTraceData(abs);
  p.catch(() => openCache.delete(abs));
  openCache.set(abs, p);
  while (openCache.size > OPEN_CACHE_SIZE) openCache.delete(openCache.keys().next().value!);
  return p;
}

/** Drops a cached open handle of a trace's data. */
export function forgetOpenTrace(abs: string): void {
  openCache.delete(abs);
}

/**
 * Min/max-decimated points over [t0, t1) in `width` buckets (bucket k covers its share of the
 * window; empty buckets are left out). Defaults to the whole trace: [t0, t0 + durationS).
 */
export async function traceWindow(ctx: AppContext, t: TraceRow, q: TraceWindowQuery): Promise<TraceWindow & { t0: number; t1: number; width: number }> {
  const t0 = q.t0 ?? t.t0;
  const t1 = q.t1 ?? (q.t0 !== undefined && q.t0 >= t.t0 + t.durationS ? q.t0 + t.durationS : t.t0 + t.durationS);
  if (!(t1 > t0)) throw badRequest("validation_failed", "Check the query: t1 must be later than t0.", { fields: [{ path: "t1", message: "t1 must be later than t0." }] });
  const data = await openCached(traceDataFilePath(ctx, t));
  const w = await data.window(t0, t1, q.width);
  return { t0, t1, width: q.width, ...w };
}

/**
 * The comparison across a case's traces (cylinder to cylinder), from the analyses stored at
 * upload: shared/analysis compareTraces over the traces of the kind most of them share (the
 * earliest such kind on a tie), or null while fewer than two of that kind have an analysis.
 */
export function caseComparison(traces: TraceRow[]): (Comparison & { kind: string; traceIds: string[] }) | null {
  const analysed = traces.filter((t) => isComparable(t.analysis));
  const counts = new Map<string, number>();
  for (const t of analysed) counts.set(String(t.analysis!.kind), (counts.get(String(t.analysis!.kind)) ?? 0) + 1);
  let kind: string | null = null;
  for (const [k, n] of counts) if (kind === null || n > counts.get(kind)!) kind = k;
  if (kind === null) return null;
  const same = analysed.filter((t) => t.analysis!.kind === kind);
  if (same.length < 2) return null;
  const results = same.map((t) => ({ ...(t.analysis as unknown as ComparableResult), traceId: t.id, file: undefined }));
  return { kind, traceIds: same.map((t) => t.id), ...compareTraces(results) };
}

function isComparable(a: Record<string, unknown> | null): boolean {
  return !!a && typeof a.kind === "string" && !!a.summary && typeof a.summary === "object";
}

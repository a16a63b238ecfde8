import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { badRequest } from "../http/errors";
import { openTraceData, type TraceData } from "../traces/store";
import type { TraceWindow } from "../../shared/trace/types";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import type { TraceWindowQuery } from "../../shared/schemas/traces";
import type { StoredUpload } from "../uploads/multer";
import { ingestTrace } from "../uploads/pipeline";
import { compareTraces, type ComparableResult } from "../../shared/analysis/compare";
import type { Comparison } from "../../shared/analysis/types";
import { announceCaseChange, recordCaseEvent, touchCase } from "../workflow/records";
import { contentInFlight, removeStoredFile, resolveDataPath } from "./storage";

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
  const row = await ctx.db.read((tx) =>
    tx.select({ id: trace.id }).from(trace).where(eq(trace.sha256, sha256)).limit(1).get(),
  );
  return row !== undefined;
}

/** Removes a trace (draft only, checked by the policy): its row, its parsed data, and its original when no other trace uses it. */
export async function deleteTrace(ctx: AppContext, actor: Actor, t: TraceRow): Promise<void> {
  const now = ctx.now();
  await ctx.db.write(async (tx) => {
    await tx.delete(trace).where(eq(trace.id, t.id)).run();
    await recordCaseEvent(tx, {
      caseId: t.caseId,
      actorId: actor.id,
      type: "trace_deleted",
      at: now,
      data: { traceId: t.id, name: t.name },
    });
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

/**
 * Adds a trace to a case from a file already on disk (plain or gzip), through the same pipeline
 * as every upload (server/uploads/pipeline.ts): checked, parsed, stored and measured in a pool
 * thread, then the compressed original and the row — all or nothing. The caller removes its file.
 */
export async function addTrace(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  upload: StoredUpload,
  fields: { settings: CaptureSettings; name?: string },
): Promise<TraceRow> {
  return ingestTrace(
    ctx,
    actor,
    caseId,
    { path: upload.path, encoding: "auto", originalName: upload.originalname },
    fields,
  );
}

/** Whether the stored original is gzip-compressed (new uploads) rather than plain (older rows). */
export function originalIsCompressed(t: TraceRow): boolean {
  return t.originalPath.endsWith(".gz");
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
export async function traceWindow(
  ctx: AppContext,
  t: TraceRow,
  q: TraceWindowQuery,
): Promise<TraceWindow & { t0: number; t1: number; width: number }> {
  const t0 = q.t0 ?? t.t0;
  const t1 = q.t1 ?? (q.t0 !== undefined && q.t0 >= t.t0 + t.durationS ? q.t0 + t.durationS : t.t0 + t.durationS);
  if (!(t1 > t0))
    throw badRequest("validation_failed", "Check the query: t1 must be later than t0.", {
      fields: [{ path: "t1", message: "t1 must be later than t0." }],
    });
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

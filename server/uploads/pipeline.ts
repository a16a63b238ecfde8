/**
 * What happens to a capture once its bytes have arrived, the same for every way in (a resumable
 * tus upload, a multipart POST, the demo seed): the pool thread checks, parses, stores the channels
 * and measures (server/uploads/ingest.ts); back on the event loop the compressed original is moved
 * to its content-addressed place and the row, its event and the case's touch are written in one
 * transaction that checks the case again. All or nothing: a refusal or a fault removes what this
 * upload made (never a file another row or upload uses).
 */
import fs from "node:fs";
import path from "node:path";
import { eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCanAddTrace } from "../auth/policies/traces";
import { HttpError } from "../http/errors";
import type { CaptureSettings } from "../../shared/schemas/capture-settings";
import { announceCaseChange, getCaseRow, recordCaseEvent, touchCase, type CaseRow } from "../workflow/records";
import { cleanFileName } from "../services/photos";
import {
  contentInFlight,
  holdFile,
  placeContentAddressed,
  relativeDataPath,
  removeStoredFile,
  storageLayout,
  type PlacedFile,
} from "../services/storage";
import { PoolFullError, runIngest, uploadPool, type WorkPool } from "./pool";
import type { BodyEncoding, IngestRefusal, IngestResult } from "./ingest";
import type { UploadTracker } from "./progress";

const { trace } = schema;
export type TraceRow = typeof schema.trace.$inferSelect;

/** Bytes that have arrived, waiting for the pipeline. */
export interface ReceivedCapture {
  /** absolute path; the pipeline moves it (a gzip body becomes the stored original) or leaves it */
  path: string;
  encoding: BodyEncoding | "auto";
  /** the file's name as the user gave it (shown, and used for the download) */
  originalName: string;
}

/** The pool of this server's configuration. */
export function poolFor(ctx: AppContext): WorkPool {
  return uploadPool({ threads: ctx.env.UPLOAD_WORKERS, maxWaiting: ctx.env.UPLOAD_QUEUE });
}

function refusalError(r: IngestRefusal): HttpError {
  return new HttpError(r.status, r.code, r.message, r.details);
}

/** A fault of the pool thread itself, in words for the tech. */
function threadFault(err: unknown): HttpError | null {
  const e = err as { code?: string; name?: string } | null;
  if (e?.code === "ERR_WORKER_OUT_OF_MEMORY") {
    return new HttpError(
      413,
      "too_large",
      "Reading this file needs more memory than one upload may use; export a shorter capture.",
      {
        reason: "memory",
      },
    );
  }
  if (e?.name === "AbortError" || e?.name === "TimeoutError") {
    return new HttpError(
      413,
      "too_large",
      "Reading this file took longer than one upload may take; export a shorter capture.",
      { reason: "time" },
    );
  }
  return null;
}

export function busyError(err: PoolFullError): HttpError {
  return new HttpError(503, "busy", `The server is reading ${err.waiting} other captures; try again in a minute.`, {
    retryAfterS: 30,
  });
}

async function traceUsesContent(ctx: AppContext, sha256: string): Promise<boolean> {
  const row = await ctx.db.read((tx) =>
    tx.select({ id: trace.id }).from(trace).where(eq(trace.sha256, sha256)).limit(1).get(),
  );
  return row !== undefined;
}

/** "coil4.csv.gz" → "coil4.csv": the trace's default name is the file's, without the compression. */
export function defaultTraceName(originalName: string): string {
  return originalName.replace(/\.gz$/i, "") || originalName;
}

/**
 * Runs the pipeline for a capture of `caseId` (the route has checked the case before the first
 * byte; it is checked again in the transaction). Resolves with the stored row; rejects with an
 * HttpError for a refusal (the tracker, when given, is told either way).
 */
export async function ingestTrace(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  capture: ReceivedCapture,
  fields: { settings: CaptureSettings; name?: string },
  tracker?: UploadTracker,
  read?: PrereadCapture,
  onStore?: OnStore,
): Promise<TraceRow> {
  try {
    const row = await runPipeline(ctx, actor, caseId, capture, fields, tracker, read, onStore);
    tracker?.stored(row.id);
    return row;
  } catch (err) {
    const http = err instanceof HttpError ? err : null;
    tracker?.refused(
      http
        ? { code: http.code, message: http.message }
        : { code: "internal", message: "The server could not store this capture." },
    );
    throw err;
  }
}

/** Runs in the unit that stores the trace (e.g. marking a resumable upload's claim done). */
export type OnStore = (tx: Tx, traceId: string) => Promise<void>;

/** A capture read while it arrived (a follower): its trace id and the pass's result. */
export interface PrereadCapture {
  traceId: string;
  result: () => Promise<IngestResult>;
}

/** The names the pass writes for trace `id`: its channel file and the compressed copy of a plain body. */
export function passOutputs(ctx: AppContext, id: string): { dataTarget: string; copyTarget: string } {
  const layout = storageLayout(ctx.env.dataDir);
  return {
    dataTarget: path.join(layout.tracesDir, `${id}.trace`),
    copyTarget: path.join(layout.tempDir, `${id}.gz.part`),
  };
}

async function runPipeline(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  capture: ReceivedCapture,
  fields: { settings: CaptureSettings; name?: string },
  tracker?: UploadTracker,
  read?: PrereadCapture,
  onStore?: OnStore,
): Promise<TraceRow> {
  const layout = storageLayout(ctx.env.dataDir);
  const id = read?.traceId ?? crypto.randomUUID();
  const { settings } = fields;
  await fs.promises.mkdir(layout.tracesDir, { recursive: true });
  await fs.promises.mkdir(layout.tempDir, { recursive: true });
  const { dataTarget, copyTarget } = passOutputs(ctx, id);
  const holds = [holdFile(dataTarget), holdFile(copyTarget), holdFile(capture.path)];
  let dataFile: string | null = null;
  let copy: string | null = null;
  let placed: PlacedFile | null = null;
  let sha256 = "";
  let committed = false;
  try {
    let result: IngestResult;
    try {
      result = read
        ? await read.result()
        : await runIngest(
            poolFor(ctx),
            {
              source: capture.path,
              encoding: capture.encoding,
              tempDir: layout.tempDir,
              tracesDir: layout.tracesDir,
              traceId: id,
              settings,
              maxBytes: ctx.env.MAX_TRACE_BYTES,
            },
            {
              onQueued: (position) => tracker?.queued(position),
              onStart: () => tracker?.checking(0),
              onProgress: (p) =>
                p.stage === "measuring" ? tracker?.measuring() : tracker?.checking(p.fraction ?? null),
            },
          );
    } catch (err) {
      if (err instanceof PoolFullError) throw busyError(err);
      throw threadFault(err) ?? err;
    }
    if (!result.ok) throw refusalError(result.refusal);
    dataFile = result.dataFile;
    copy = result.original.isSource ? null : result.original.path;
    sha256 = result.sha256;
    if (result.analysisError)
      ctx.logger.warn({ err: result.analysisError, traceId: id }, "trace analysis failed; stored without analysis");
    placed = await placeContentAddressed(layout, layout.originalsDir, result.original.path, sha256, ".gz");
    copy = null;
    const originalName = cleanFileName(capture.originalName, "trace.csv");
    const name = fields.name || defaultTraceName(originalName);
    const now = ctx.now();
    const row: TraceRow = {
      id,
      caseId,
      uploadedBy: actor.id,
      name,
      kind: settings.kind,
      settings: settings as Record<string, unknown>,
      sha256,
      originalBytes: result.plainBytes,
      originalPath: placed.rel,
      dataPath: relativeDataPath(layout.dataDir, dataFile),
      ...result.meta,
      analysis: result.analysis,
      originalName,
      createdAt: now,
    };
    const stored = await ctx.db.write(async (tx) => {
      // The case may have moved on while the file was arriving and being read.
      assertCanAddTrace(actor, (await getCaseRow(tx, caseId)) as CaseRow | undefined);
      const inserted = await tx.insert(trace).values(row).returning().get();
      await recordCaseEvent(tx, {
        caseId,
        actorId: actor.id,
        type: "trace_added",
        at: now,
        data: { traceId: id, name, samples: row.samples },
      });
      await touchCase(tx, caseId, now);
      await onStore?.(tx, id);
      return inserted;
    });
    committed = true;
    announceCaseChange(ctx, caseId, now, "trace", id);
    return stored;
  } finally {
    if (!committed) {
      await fs.promises.rm(dataFile ?? dataTarget, { force: true }).catch(() => {});
      await fs.promises.rm(copy ?? copyTarget, { force: true }).catch(() => {});
      if (placed && contentInFlight(placed.abs) <= 1 && !(await traceUsesContent(ctx, sha256)))
        await removeStoredFile(placed.abs);
    }
    placed?.release();
    for (const release of holds) release();
  }
}

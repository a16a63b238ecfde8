/**
 * Waveform thumbnails for casebook entries: a small SVG of the entry's first published trace, drawn
 * from the stored min/max pyramid (one window of a few hundred buckets, never the samples), so
 * search hits and "these may already answer your case" show the pattern at a glance.
 *
 * The picture depends only on the trace's stored data and its analysis, so it is rendered once per
 * trace content and kept (a small in-memory cache); its ETag is a hash of the SVG. Who may see it
 * is decided like the entry itself (casebook policy "read": a hidden entry is 404 but for admins).
 */
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { casebookPolicy } from "../auth/policies/casebook";
import { notFound } from "../http/errors";
import { openTraceDataCached } from "../traces/store";
import { resolveDataPath } from "./storage";
import type { TraceWindow } from "../../shared/trace/types";
import type { CasebookEntryBody } from "../../shared/schemas/casebook";

export const THUMB = { width: 160, height: 48, pad: 3 } as const;
/** Bumped whenever the drawing changes, so cached pictures and ETags change with it. */
const RENDER_VERSION = 1;
/** Trace colour (the app's "kiln", deepened for contrast), the plot area, the zero line (src/styles.css). */
const COLORS = { trace: "#a65a12", area: "#f4f6f7", zero: "#c9d3d9", empty: "#748893" } as const;

export interface Thumbnail {
  svg: string;
  etag: string;
}

interface ThumbSource {
  samples: number;
  t0: number;
  durationS: number;
  settings: unknown;
  analysis: unknown;
}

const finite = (x: unknown): x is number => typeof x === "number" && Number.isFinite(x);

/**
 * The stretch of the trace a thumbnail shows (seconds, the trace's own time): around its first
 * analysed event when the event has a length (the firing line, the spark line and the ringing after
 * it; an injector's pulse) — twice that length, 15 % of it before the event; else the capture's
 * screen (10 × time/division, from the trace's start); else the whole trace.
 */
export function thumbnailWindow(t: ThumbSource): { t0: number; t1: number } {
  const start = t.t0;
  const end = t.t0 + Math.max(t.durationS, 0);
  const ev = ((t.analysis as { events?: Record<string, unknown>[] } | null)?.events ?? [])[0];
  const at = ev?.timeS;
  let length: number | null = null;
  if (ev && finite(at)) {
    if (finite(ev.sparkEndS) && ev.sparkEndS > at) length = ev.sparkEndS - at;
    else if (finite(ev.burnTimeMs) && ev.burnTimeMs > 0) length = ev.burnTimeMs / 1000;
    else if (finite(ev.pulseWidthMs) && ev.pulseWidthMs > 0) length = ev.pulseWidthMs / 1000;
  }
  if (length != null && finite(at)) {
    const span = (2 * length) / 0.85;
    const t0 = Math.max(start, at - 0.15 * span);
    return { t0, t1: Math.min(end, t0 + span) };
  }
  const tpd = (t.settings as { timePerDivS?: unknown } | null)?.timePerDivS;
  if (finite(tpd) && tpd > 0 && 10 * tpd < end - start) return { t0: start, t1: start + 10 * tpd };
  return { t0: start, t1: end > start ? end : start + 1 };
}

const f1 = (x: number) => (Math.round(x * 10) / 10).toString();

/** The picture with nothing to draw (an entry without a published trace). */
export function emptyThumbnailSvg(): string {
  const { width: w, height: h } = THUMB;
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${w} ${h}" width="${w}" height="${h}">` +
    `<rect width="${w}" height="${h}" rx="4" fill="${COLORS.area}"/>` +
    `<path d="M8 ${h / 2}H${w - 8}" stroke="${COLORS.empty}" stroke-width="1" stroke-dasharray="3 3"/></svg>`
  );
}

/**
 * The SVG of a min/max window of the trace's first channel over [t0, t1): a band between the
 * buckets' minima and maxima (a spike inside a bucket is kept), levels fitted to the data with a
 * small margin, the zero line when it is in range. Pure; no text, no script.
 */
export function renderThumbnailSvg(win: TraceWindow, range: { t0: number; t1: number }): string {
  const { width: w, height: h, pad } = THUMB;
  const s = win.series[0];
  if (!s || win.t.length === 0) return emptyThumbnailSvg();
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < win.t.length; k++) {
    if (Number.isFinite(s.min[k])) lo = Math.min(lo, s.min[k]);
    if (Number.isFinite(s.max[k])) hi = Math.max(hi, s.max[k]);
  }
  if (!(hi >= lo)) return emptyThumbnailSvg();
  const margin = (hi - lo) * 0.06 || Math.abs(hi) * 0.1 || 1;
  const vMin = lo - margin;
  const vMax = hi + margin;
  const X = (t: number) => pad + ((t - range.t0) / (range.t1 - range.t0)) * (w - 2 * pad);
  const Y = (v: number) => h - pad - ((v - vMin) / (vMax - vMin)) * (h - 2 * pad);
  const upper: string[] = [];
  const lower: string[] = [];
  for (let k = 0; k < win.t.length; k++) {
    if (!Number.isFinite(s.min[k]) || !Number.isFinite(s.max[k])) continue;
    const x = f1(X(win.t[k]));
    upper.push(`${x} ${f1(Y(s.max[k]))}`);
    lower.push(`${x} ${f1(Y(s.min[k]))}`);
  }
  const band = `M${upper.join("L")}L${lower.reverse().join("L")}Z`;
  const zero =
    vMin < 0 && vMax > 0 ? `<path d="M${pad} ${f1(Y(0))}H${w - pad}" stroke="${COLORS.zero}" stroke-width="1"/>` : "";
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${w} ${h}" width="${w}" height="${h}">` +
    `<rect width="${w}" height="${h}" rx="4" fill="${COLORS.area}"/>${zero}` +
    `<path d="${band}" fill="${COLORS.trace}" fill-opacity="0.3" stroke="${COLORS.trace}" stroke-width="1.2" stroke-linejoin="round"/></svg>`
  );
}

const cache = new Map<string, Thumbnail>();
const CACHE_ENTRIES = 500;

function remember(key: string, t: Thumbnail): Thumbnail {
  cache.delete(key);
  cache.set(key, t);
  while (cache.size > CACHE_ENTRIES) cache.delete(cache.keys().next().value!);
  return t;
}

const etagOf = (svg: string) =>
  `"th${RENDER_VERSION}-${createHash("sha256").update(svg).digest("base64url").slice(0, 27)}"`;

/** The thumbnail of a stored trace, rendered once per trace content (sha256 of its file) and analysis. */
async function traceThumbnail(ctx: AppContext, tr: typeof schema.trace.$inferSelect): Promise<Thumbnail> {
  const range = thumbnailWindow(tr);
  const key = `${tr.sha256}:${tr.id}:${range.t0}:${range.t1}:${RENDER_VERSION}`;
  const hit = cache.get(key);
  if (hit) return remember(key, hit);
  const data = await openTraceDataCached(resolveDataPath(ctx.env.dataDir, tr.dataPath));
  const width = Math.min(2 * THUMB.width, Math.max(2, tr.samples));
  const svg = renderThumbnailSvg(await data.window(range.t0, range.t1, width), range);
  return remember(key, { svg, etag: etagOf(svg) });
}

/**
 * GET /api/casebook/:id/thumbnail.svg — the entry's first published trace as a small picture.
 * 404 when the entry is missing or the actor may not read it (a hidden entry, for all but admins).
 */
export async function entryThumbnail(ctx: AppContext, actor: Actor, entryId: string): Promise<Thumbnail> {
  const e = await ctx.db.read((tx) =>
    tx.select().from(schema.casebookEntry).where(eq(schema.casebookEntry.id, entryId)).get(),
  );
  if (!e || !casebookPolicy.can(actor, "read", { hidden: e.hidden, expertId: e.expertId }))
    throw notFound("Casebook entry");
  const first = ((e.body as unknown as CasebookEntryBody).traces ?? [])[0];
  const tr = first
    ? await ctx.db.read((tx) => tx.select().from(schema.trace).where(eq(schema.trace.id, first.id)).get())
    : undefined;
  if (!tr) {
    const svg = emptyThumbnailSvg();
    return { svg, etag: etagOf(svg) };
  }
  return traceThumbnail(ctx, tr);
}

/**
 * Reconciles the data folder with the database, at start and periodically, and logs what it
 * removed. A crash (kill -9, power loss) mid-upload can leave a multipart temp file, a channel
 * file being written (`traces/*.tmp`), a complete channel file or original whose row was never
 * committed, or a resumable upload nobody comes back for.
 *
 * Removed:
 * - temp files (`tmp/uploads/*`, `traces/*.tmp`) that no upload of this process is writing;
 * - resumable uploads (`tmp/tus/<id>` + `<id>.json`) created more than UPLOAD_EXPIRY_HOURS ago
 *   and not being read, finished-upload markers of that age, and data files without their info;
 * - channel files, originals and photos that no row references, once older than
 *   ORPHAN_GRACE_MINUTES (an upload writes its files just before its row); at start nothing of
 *   this process is in flight, so the grace does not apply then.
 * Files held by an upload in flight (server/services/storage.ts holdFile, contentInFlight) are
 * never touched. When several nodes share the data folder (`shared`), what another node is
 * writing is not held in this process: temp files then also wait out the grace period, the start
 * of a node removes nothing without it, and the periodic pass runs once per period for all nodes
 * (a job of the shared queue, server/index.ts) instead of on every node.
 */
import fs from "node:fs";
import path from "node:path";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { contentInFlight, fileIsHeld, relativeDataPath, storageLayout } from "../services/storage";

export interface ReconcileRemoval {
  /** relative to the data folder */
  path: string;
  bytes: number;
  why:
    | "temp file"
    | "abandoned upload"
    | "finished upload marker"
    | "unreferenced channel file"
    | "unreferenced original"
    | "unreferenced photo";
}

export interface ReconcileOptions {
  /** at start: nothing of this process is in flight, stored orphans go without a grace period */
  startup?: boolean;
  /** other nodes share the data folder: what this process does not hold may still be theirs */
  shared?: boolean;
  now?: Date;
}

async function list(dir: string): Promise<string[]> {
  try {
    return await fs.promises.readdir(dir);
  } catch {
    return [];
  }
}

/** Every file under `dir`, recursively (absolute paths). */
async function walk(dir: string): Promise<string[]> {
  const out: string[] = [];
  let entries: fs.Dirent[];
  try {
    entries = await fs.promises.readdir(dir, { withFileTypes: true });
  } catch {
    return out;
  }
  for (const e of entries) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...(await walk(p)));
    else if (e.isFile()) out.push(p);
  }
  return out;
}

async function statOf(p: string): Promise<fs.Stats | null> {
  return fs.promises.stat(p).catch(() => null);
}

export async function reconcileDataFolder(ctx: AppContext, opts: ReconcileOptions = {}): Promise<ReconcileRemoval[]> {
  const layout = storageLayout(ctx.env.dataDir);
  const now = (opts.now ?? ctx.now()).getTime();
  const sharedGrace = ctx.env.ORPHAN_GRACE_MINUTES * 60_000;
  // at start nothing of this process is in flight — but on several nodes the others' may be
  const grace = opts.startup && !opts.shared ? 0 : sharedGrace;
  const expiry = ctx.env.UPLOAD_EXPIRY_HOURS * 3600_000;
  const removed: ReconcileRemoval[] = [];

  const remove = async (abs: string, why: ReconcileRemoval["why"], st?: fs.Stats | null) => {
    const s = st ?? (await statOf(abs));
    if (!s) return;
    await fs.promises.rm(abs, { force: true });
    removed.push({ path: relativeDataPath(layout.dataDir, abs), bytes: s.size, why });
  };
  const old = (s: fs.Stats, age: number) => now - s.mtimeMs >= age;

  // A temp file no upload of this process holds is a leftover — unless other nodes share the folder:
  // then it may be theirs, and it is a leftover once it has not been written to for the grace period.
  const orphanTemp = async (abs: string) => {
    if (fileIsHeld(abs)) return false;
    if (!opts.shared) return true;
    const s = await statOf(abs);
    return !!s && old(s, sharedGrace);
  };
  // multipart temp files and compressed copies being made
  for (const name of await list(layout.tempDir)) {
    const abs = path.join(layout.tempDir, name);
    if (await orphanTemp(abs)) await remove(abs, "temp file");
  }

  // channel files: half-written ones, and complete ones no row references
  const referenced = new Set<string>();
  const originals = new Set<string>();
  const { rows, photoRows } = await ctx.db.read(async (tx) => ({
    rows: await tx.select({ d: schema.trace.dataPath, o: schema.trace.originalPath }).from(schema.trace).all(),
    photoRows: await tx.select({ p: schema.photo.path }).from(schema.photo).all(),
  }));
  for (const t of rows) {
    referenced.add(t.d);
    originals.add(t.o);
  }
  for (const name of await list(layout.tracesDir)) {
    const abs = path.join(layout.tracesDir, name);
    const tmp = /^(.+\.trace)\.[0-9a-f]+\.tmp$/.exec(name);
    if (tmp) {
      if (!fileIsHeld(path.join(layout.tracesDir, tmp[1])) && (await orphanTemp(abs))) await remove(abs, "temp file");
      continue;
    }
    if (!name.endsWith(".trace") || referenced.has(relativeDataPath(layout.dataDir, abs)) || fileIsHeld(abs)) continue;
    const s = await statOf(abs);
    if (s && old(s, grace)) await remove(abs, "unreferenced channel file", s);
  }

  // originals and photos no row references
  const photos = new Set(photoRows.map((p) => p.p));
  for (const [root, keep, why] of [
    [layout.originalsDir, originals, "unreferenced original"],
    [layout.photosDir, photos, "unreferenced photo"],
  ] as const) {
    for (const abs of await walk(root)) {
      if (keep.has(relativeDataPath(layout.dataDir, abs)) || contentInFlight(abs) > 0 || fileIsHeld(abs)) continue;
      const s = await statOf(abs);
      if (s && old(s, grace)) {
        await remove(abs, why, s);
        await fs.promises.rmdir(path.dirname(abs)).catch(() => {});
      }
    }
  }

  await reconcileTus(layout.tusDir, { now, expiry, startup: !!opts.startup && !opts.shared }, remove);

  if (removed.length) {
    const bytes = removed.reduce((n, r) => n + r.bytes, 0);
    ctx.logger.info(
      { removed, bytes },
      `data folder reconciled: removed ${removed.length} leftover file(s), ${bytes} bytes`,
    );
  } else {
    ctx.logger.debug("data folder reconciled: nothing to remove");
  }
  return removed;
}

/** Resumable uploads: abandoned ones, old finished markers, data files without their info. */
async function reconcileTus(
  dir: string,
  o: { now: number; expiry: number; startup: boolean },
  remove: (abs: string, why: ReconcileRemoval["why"]) => Promise<void>,
): Promise<void> {
  const names = new Set(await list(dir));
  for (const name of names) {
    const abs = path.join(dir, name);
    if (name.endsWith(".json")) {
      const id = name.slice(0, -5);
      const data = path.join(dir, id);
      if (fileIsHeld(data)) continue;
      let info: { creation_date?: string; done?: { at: string } } | null;
      try {
        info = JSON.parse(await fs.promises.readFile(abs, "utf8"));
      } catch {
        info = null;
      }
      const since = Date.parse(info?.done?.at ?? info?.creation_date ?? "") || (await statOf(abs))?.mtimeMs || o.now;
      if (o.now - since < o.expiry && info) continue;
      await remove(data, info?.done ? "finished upload marker" : "abandoned upload");
      await remove(abs, info?.done ? "finished upload marker" : "abandoned upload");
      continue;
    }
    if (names.has(`${name}.json`) || fileIsHeld(abs)) continue;
    // a data file whose info was never written (a crash inside creation)
    const s = await statOf(abs);
    if (s && (o.startup || o.now - s.mtimeMs > 60_000)) await remove(abs, "abandoned upload");
  }
}

/** How often the data folder is reconciled after the start. */
export const RECONCILE_EVERY_MS = 15 * 60_000;

/** Reconciles now and then every `everyMs`; the timer never keeps the process alive. */
export function startReconcileTimer(ctx: AppContext, everyMs = RECONCILE_EVERY_MS): { stop(): void } {
  const timer = setInterval(() => {
    reconcileDataFolder(ctx).catch((err) => ctx.logger.error({ err }, "data folder reconcile failed"));
  }, everyMs);
  timer.unref();
  return { stop: () => clearInterval(timer) };
}

import fs from "node:fs";
import path from "node:path";

/**
 * Where uploaded material lives, all under the data directory and outside any static folder:
 *   <data>/tmp/uploads/<random>.part       multipart temp files and compressed copies being made
 *                                          (removed after every request; leftovers by the reconcile)
 *   <data>/tmp/tus/<id>, <id>.json         resumable uploads in progress (server/uploads/tus.ts)
 *   <data>/originals/<sha[0..2]>/<sha>.gz  trace files gzip-compressed, content-addressed by the
 *                                          SHA-256 of the plain bytes (older rows: <sha>, plain)
 *   <data>/photos/<sha[0..2]>/<sha>        photos as uploaded, content-addressed
 *   <data>/traces/<id>.trace               parsed channels in binary form (server/traces/store.ts)
 * Paths kept in the database are relative to the data directory.
 */
export interface StorageLayout {
  dataDir: string;
  tempDir: string;
  tusDir: string;
  originalsDir: string;
  photosDir: string;
  tracesDir: string;
}

export function storageLayout(dataDir: string): StorageLayout {
  return {
    dataDir,
    tempDir: path.join(dataDir, "tmp", "uploads"),
    tusDir: path.join(dataDir, "tmp", "tus"),
    originalsDir: path.join(dataDir, "originals"),
    photosDir: path.join(dataDir, "photos"),
    tracesDir: path.join(dataDir, "traces"),
  };
}

const SHA256_HEX = /^[0-9a-f]{64}$/;

/** The absolute path of a stored relative path; refuses anything that would leave the data directory. */
export function resolveDataPath(dataDir: string, rel: string): string {
  const abs = path.resolve(dataDir, rel);
  const root = path.resolve(dataDir) + path.sep;
  if (!abs.startsWith(root)) throw new Error(`Stored path escapes the data directory: ${rel}`);
  return abs;
}

export function relativeDataPath(dataDir: string, abs: string): string {
  return path.relative(path.resolve(dataDir), abs).split(path.sep).join("/");
}

/** Content-addressed location for a SHA-256 in `root` (`suffix` e.g. ".gz" for a compressed copy). */
export function contentPath(root: string, sha256: string, suffix = ""): string {
  if (!SHA256_HEX.test(sha256)) throw new Error("not a sha-256 hex digest");
  if (suffix && !/^\.[a-z0-9]{1,8}$/.test(suffix)) throw new Error("bad content suffix");
  return path.join(root, sha256.slice(0, 2), sha256 + suffix);
}

/**
 * Files being written right now by this process (temp files, channel files of jobs not yet
 * committed). The reconcile (server/uploads/reconcile.ts) never removes them.
 */
const busyFiles = new Set<string>();

/** Marks `abs` as in use until the returned function is called. */
export function holdFile(abs: string): () => void {
  const key = path.resolve(abs);
  busyFiles.add(key);
  return () => {
    busyFiles.delete(key);
  };
}

export function fileIsHeld(abs: string): boolean {
  return busyFiles.has(path.resolve(abs));
}

/** Content hashes with an upload in progress, so a failing upload never removes a file another is about to use. */
const inFlight = new Map<string, number>();

export interface PlacedFile {
  abs: string;
  rel: string;
  /** false when the same content was already stored (the temp file was then discarded) */
  created: boolean;
  /** call when the upload is over (committed or not) */
  release(): void;
}

/**
 * Moves a temp file to its content-addressed place (same filesystem: a rename). When the content
 * is already stored, the existing file is kept and the temp file removed.
 */
export async function placeContentAddressed(
  layout: StorageLayout,
  root: string,
  tempPath: string,
  sha256: string,
  suffix = "",
): Promise<PlacedFile> {
  const abs = contentPath(root, sha256, suffix);
  const key = abs;
  inFlight.set(key, (inFlight.get(key) ?? 0) + 1);
  const release = () => {
    const n = (inFlight.get(key) ?? 1) - 1;
    if (n <= 0) inFlight.delete(key);
    else inFlight.set(key, n);
  };
  try {
    await fs.promises.mkdir(path.dirname(abs), { recursive: true });
    let created = false;
    try {
      await fs.promises.access(abs);
      await fs.promises.rm(tempPath, { force: true });
    } catch {
      await fs.promises.rename(tempPath, abs);
      created = true;
    }
    return { abs, rel: relativeDataPath(layout.dataDir, abs), created, release };
  } catch (err) {
    release();
    throw err;
  }
}

/** How many uploads of this content are under way right now (a caller holding a PlacedFile counts itself). */
export function contentInFlight(abs: string): number {
  return inFlight.get(abs) ?? 0;
}

/** Whether any upload of this process is placing content right now (the reconcile then waits). */
export function anyContentInFlight(): boolean {
  return inFlight.size > 0;
}

/** Removes a file and then its shard folder if that became empty. Missing files are fine. */
export async function removeStoredFile(abs: string): Promise<void> {
  await fs.promises.rm(abs, { force: true, recursive: false }).catch(() => {});
  await fs.promises.rmdir(path.dirname(abs)).catch(() => {});
}

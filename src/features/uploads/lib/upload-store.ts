/**
 * What survives a page reload of an upload in progress, in the browser's IndexedDB: the capture's
 * description (case, name, size, settings), the resumable upload's address on the server, and the
 * compressed bytes as they were made (the exact bytes the server has a prefix of, so the upload
 * continues from the server's last byte). Removed once the trace is stored, refused or cancelled.
 * Without IndexedDB (a private window in some browsers) nothing is kept and a reload starts over.
 */
import type { CaptureSettings } from "../../../../shared/schemas/capture-settings";

const DB = "burnline-uploads";
const VERSION = 1;

export interface SavedUpload {
  key: string;
  caseId: string;
  fileName: string;
  fileBytes: number;
  lastModified: number;
  settings: CaptureSettings;
  traceName?: string;
  /** the resumable upload's address (set once the server made it) */
  uploadUrl?: string;
  /** all compressed pieces are saved */
  compressedDone: boolean;
  compressedBytes: number;
  createdAt: number;
}

let opening: Promise<IDBDatabase | null> | null = null;

function open(): Promise<IDBDatabase | null> {
  if (opening) return opening;
  opening = new Promise((resolve) => {
    if (typeof indexedDB === "undefined") return resolve(null);
    const req = indexedDB.open(DB, VERSION);
    req.onupgradeneeded = () => {
      const db = req.result;
      if (!db.objectStoreNames.contains("uploads")) db.createObjectStore("uploads", { keyPath: "key" });
      if (!db.objectStoreNames.contains("pieces")) db.createObjectStore("pieces", { keyPath: ["key", "index"] });
    };
    req.onsuccess = () => resolve(req.result);
    req.onerror = () => resolve(null);
    req.onblocked = () => resolve(null);
  });
  return opening;
}

function done(tx: IDBTransaction): Promise<void> {
  return new Promise((resolve, reject) => {
    tx.oncomplete = () => resolve();
    tx.onerror = () => reject(tx.error);
    tx.onabort = () => reject(tx.error);
  });
}

function all<T>(req: IDBRequest): Promise<T[]> {
  return new Promise((resolve, reject) => {
    req.onsuccess = () => resolve(req.result as T[]);
    req.onerror = () => reject(req.error);
  });
}

export async function saveUpload(u: SavedUpload): Promise<void> {
  const db = await open();
  if (!db) return;
  const tx = db.transaction("uploads", "readwrite");
  tx.objectStore("uploads").put(u);
  await done(tx).catch(() => {});
}

export async function patchUpload(key: string, patch: Partial<SavedUpload>): Promise<void> {
  const db = await open();
  if (!db) return;
  const tx = db.transaction("uploads", "readwrite");
  const store = tx.objectStore("uploads");
  const req = store.get(key);
  req.onsuccess = () => {
    if (req.result) store.put({ ...req.result, ...patch });
  };
  await done(tx).catch(() => {});
}

export async function savePiece(key: string, index: number, data: Blob): Promise<void> {
  const db = await open();
  if (!db) return;
  const tx = db.transaction("pieces", "readwrite");
  tx.objectStore("pieces").put({ key, index, data });
  await done(tx).catch(() => {});
}

/** The saved uploads of a case, oldest first. */
export async function savedUploads(caseId: string): Promise<SavedUpload[]> {
  const db = await open();
  if (!db) return [];
  const tx = db.transaction("uploads", "readonly");
  const list = await all<SavedUpload>(tx.objectStore("uploads").getAll()).catch(() => []);
  return list.filter((u) => u.caseId === caseId).sort((a, b) => a.createdAt - b.createdAt);
}

/** The saved compressed pieces of an upload, in order. */
export async function savedPieces(key: string): Promise<Blob[]> {
  const db = await open();
  if (!db) return [];
  const tx = db.transaction("pieces", "readonly");
  const range = IDBKeyRange.bound([key, 0], [key, Number.MAX_SAFE_INTEGER]);
  const rows = await all<{ index: number; data: Blob }>(tx.objectStore("pieces").getAll(range)).catch(() => []);
  rows.sort((a, b) => a.index - b.index);
  // a gap (a piece lost in a crash) makes the rest unusable
  const out: Blob[] = [];
  for (let i = 0; i < rows.length && rows[i].index === i; i++) out.push(rows[i].data);
  return out;
}

export async function forgetUpload(key: string): Promise<void> {
  const db = await open();
  if (!db) return;
  const tx = db.transaction(["uploads", "pieces"], "readwrite");
  tx.objectStore("uploads").delete(key);
  tx.objectStore("pieces").delete(IDBKeyRange.bound([key, 0], [key, Number.MAX_SAFE_INTEGER]));
  await done(tx).catch(() => {});
}

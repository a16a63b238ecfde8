import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { assertCaseAction } from "../auth/policies/cases";
import type { StoredUpload } from "../uploads/multer";
import { imageExtensions, type ImageMime } from "../uploads/magic";
import { announceCaseChange, getCaseRow, recordCaseEvent, touchCase, type CaseRow } from "../workflow/records";
import {
  contentInFlight,
  placeContentAddressed,
  removeStoredFile,
  resolveDataPath,
  storageLayout,
  type PlacedFile,
} from "./storage";

export type PhotoRow = typeof schema.photo.$inferSelect;
const { photo } = schema;

/** A display name from the uploader's file name: no folders, no control characters, bounded. */
export function cleanFileName(name: string | undefined | null, fallback: string): string {
  const base = (name ?? "").split(/[\\/]/).pop() ?? "";
  const clean = base
    // eslint-disable-next-line no-control-regex -- control characters are exactly what is removed
    .replace(/[\u0000-\u001f\u007f"]/g, "")
    .trim()
    .slice(0, 200);
  return clean || fallback;
}

export async function getPhotoRow(ctx: AppContext, id: string): Promise<PhotoRow | undefined> {
  return ctx.db.read((tx) => tx.select().from(photo).where(eq(photo.id, id)).get());
}

export async function listPhotos(tx: Tx, caseId: string): Promise<PhotoRow[]> {
  return tx.select().from(photo).where(eq(photo.caseId, caseId)).orderBy(asc(photo.createdAt), asc(photo.id)).all();
}

export function presentPhoto(p: PhotoRow) {
  return {
    id: p.id,
    caseId: p.caseId,
    name: p.name,
    mime: p.mime,
    bytes: p.bytes,
    url: `/api/photos/${p.id}`,
    uploadedBy: p.uploadedBy,
    createdAt: p.createdAt,
  };
}

/**
 * Stores a photo whose type the upload layer has recognised by its magic bytes: moves the temp
 * file to its content-addressed place and writes the row and the "photo_added" event in one
 * transaction. On failure nothing stays: no row, and the file only if it was there before.
 */
export async function addPhoto(
  ctx: AppContext,
  actor: Actor,
  caseId: string,
  upload: StoredUpload & { detected: ImageMime },
): Promise<PhotoRow> {
  const layout = storageLayout(ctx.env.dataDir);
  const id = crypto.randomUUID();
  const mime = upload.detected;
  const name = cleanFileName(upload.originalname, `photo.${imageExtensions[mime]}`);
  let placed: PlacedFile | null = null;
  let committed = false;
  try {
    placed = await placeContentAddressed(layout, layout.photosDir, upload.path, upload.sha256);
    const now = ctx.now();
    const rel = placed.rel;
    const row = await ctx.db.write(async (tx) => {
      // The case may have moved on while the file was arriving: check again inside the transaction.
      assertCaseAction(actor, (await getCaseRow(tx, caseId)) as CaseRow | undefined, "addPhoto");
      const values = {
        id,
        caseId,
        uploadedBy: actor.id,
        name,
        mime,
        bytes: upload.size,
        sha256: upload.sha256,
        path: rel,
        createdAt: now,
      };
      const inserted = await tx.insert(photo).values(values).returning().get();
      await recordCaseEvent(tx, {
        caseId,
        actorId: actor.id,
        type: "photo_added",
        at: now,
        data: { photoId: id, name },
      });
      await touchCase(tx, caseId, now);
      return inserted;
    });
    committed = true;
    announceCaseChange(ctx, caseId, now, "photo", id);
    return row;
  } finally {
    if (placed) {
      // Keep the file if a row uses it or another upload of the same content is under way.
      if (!committed && contentInFlight(placed.abs) <= 1 && !(await photoUsesContent(ctx, upload.sha256)))
        await removeStoredFile(placed.abs);
      placed.release();
    }
  }
}

async function photoUsesContent(ctx: AppContext, sha256: string): Promise<boolean> {
  const row = await ctx.db.read((tx) =>
    tx.select({ id: photo.id }).from(photo).where(eq(photo.sha256, sha256)).limit(1).get(),
  );
  return row !== undefined;
}

/** Removes a photo (draft only, checked by the policy) and its file when no other photo uses it. */
export async function deletePhoto(ctx: AppContext, actor: Actor, p: PhotoRow): Promise<void> {
  const now = ctx.now();
  await ctx.db.write(async (tx) => {
    await tx.delete(photo).where(eq(photo.id, p.id)).run();
    const data = { photoId: p.id, name: p.name };
    await recordCaseEvent(tx, { caseId: p.caseId, actorId: actor.id, type: "photo_deleted", at: now, data });
    await touchCase(tx, p.caseId, now);
  });
  const layout = storageLayout(ctx.env.dataDir);
  const abs = resolveDataPath(layout.dataDir, p.path);
  if (contentInFlight(abs) === 0 && !(await photoUsesContent(ctx, p.sha256))) await removeStoredFile(abs);
  announceCaseChange(ctx, p.caseId, now, "photo", p.id);
}

export function photoFilePath(ctx: AppContext, p: PhotoRow): string {
  return resolveDataPath(ctx.env.dataDir, p.path);
}

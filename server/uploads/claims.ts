/**
 * One reader per finished resumable upload, across nodes (the `upload_claim` table): before a
 * node reads (parses, stores, measures) a complete upload it claims it in a write unit — the
 * first claim wins, a claim whose node stopped renewing it (killed mid-read) may be taken over,
 * and a claim whose trace is stored answers with that trace. The trace's row and the claim's
 * `trace_id` are written in one unit, so an upload is never stored twice.
 */
import os from "node:os";
import { and, eq, isNull } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { OnStore } from "./pipeline";

const { uploadClaim } = schema;
/** this process, in claims */
const ME = `${os.hostname()}:${process.pid}:${crypto.randomUUID().slice(0, 8)}`;
/** a claim not renewed for this long belongs to a node that is gone */
export const CLAIM_LEASE_MS = 2 * 60_000;

export type UploadClaim =
  | { state: "ours"; onStore: OnStore; release(): Promise<void>; stop(): void }
  | { state: "done"; traceId: string }
  | { state: "elsewhere" };

export async function claimUpload(ctx: AppContext, uploadId: string): Promise<UploadClaim> {
  const now = new Date();
  const got = await ctx.db.write(async (tx) => {
    const cur = await tx.select().from(uploadClaim).where(eq(uploadClaim.uploadId, uploadId)).get();
    if (cur?.traceId) return { state: "done" as const, traceId: cur.traceId };
    const live = cur && cur.claimedBy !== ME && now.getTime() - cur.claimedAt.getTime() < CLAIM_LEASE_MS;
    if (live) return { state: "elsewhere" as const };
    await tx
      .insert(uploadClaim)
      .values({ uploadId, claimedBy: ME, claimedAt: now })
      .onConflictDoUpdate({ target: uploadClaim.uploadId, set: { claimedBy: ME, claimedAt: now } })
      .run();
    return { state: "ours" as const };
  });
  if (got.state !== "ours") return got;
  const mine = and(eq(uploadClaim.uploadId, uploadId), eq(uploadClaim.claimedBy, ME), isNull(uploadClaim.traceId));
  const renew = setInterval(() => {
    ctx.db
      .write((tx) => tx.update(uploadClaim).set({ claimedAt: new Date() }).where(mine).run())
      .catch((err) => ctx.logger.warn({ err, uploadId }, "upload claim not renewed"));
  }, CLAIM_LEASE_MS / 4);
  renew.unref();
  return {
    state: "ours",
    async onStore(tx: Tx, traceId: string) {
      await tx.update(uploadClaim).set({ traceId }).where(mine).run();
    },
    async release() {
      clearInterval(renew);
      await ctx.db.write((tx) => tx.delete(uploadClaim).where(mine).run()).catch(() => {});
    },
    stop: () => clearInterval(renew),
  };
}

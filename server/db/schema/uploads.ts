import { sqliteTable, text, integer } from "drizzle-orm/sqlite-core";

/**
 * Who is reading a finished resumable upload. Several nodes share the uploads' folder, and a
 * client that lost an answer may ask another node: the node that inserts (or takes over a stale)
 * claim reads the upload; the others answer that it is being read, or with the stored trace.
 */
export const uploadClaim = sqliteTable("upload_claim", {
  /** the tus upload id */
  uploadId: text("upload_id").primaryKey(),
  /** the claiming process (node) */
  claimedBy: text("claimed_by").notNull(),
  /** renewed while the upload is read; an old one (its node died) may be taken over */
  claimedAt: integer("claimed_at", { mode: "timestamp_ms" }).notNull(),
  /** set in the unit that stores the trace */
  traceId: text("trace_id"),
});

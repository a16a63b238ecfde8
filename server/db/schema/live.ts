import { sqliteTable, text, integer, real, index, uniqueIndex } from "drizzle-orm/sqlite-core";
import { user } from "./auth";
import { caseTable, trace } from "./cases";

/**
 * Live review: the marks on a case's traces and its chat, both numbered by one per-case sequence.
 *
 * `seq` is strictly increasing per case and is assigned in the same transaction as the change it
 * numbers. An update or a delete gives the record a new seq (a delete keeps the row as a tombstone
 * with `deleted_at`), so "everything with seq > since" reproduces the final state of the case for
 * a client that last saw `since`.
 */

/** The last seq handed out for each case. */
export const caseSeq = sqliteTable("case_seq", {
  caseId: text("case_id")
    .primaryKey()
    .references(() => caseTable.id, { onDelete: "cascade" }),
  seq: integer("seq").notNull().default(0),
});

export const annotation = sqliteTable(
  "annotation",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    traceId: text("trace_id")
      .notNull()
      .references(() => trace.id, { onDelete: "cascade" }),
    authorId: text("author_id").references(() => user.id, { onDelete: "set null" }),
    /** the author's own id for the mark (idempotent retries after a reconnect) */
    clientId: text("client_id"),
    /** pin | span | level | note (shared/schemas/realtime.ts) */
    kind: text("kind").notNull(),
    /** seconds, in the trace's own time base */
    t0: real("t0").notNull(),
    /** end of a span, seconds */
    t1: real("t1"),
    /** volts (or the channel's unit): the level line, or a pin's dot */
    level: real("level"),
    label: text("label"),
    channel: text("channel"),
    /** the author's colour when the mark was made */
    color: text("color").notNull(),
    seq: integer("seq").notNull(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
    deletedAt: integer("deleted_at", { mode: "timestamp_ms" }),
  },
  (t) => [
    uniqueIndex("annotation_case_seq_idx").on(t.caseId, t.seq),
    index("annotation_trace_idx").on(t.traceId),
    uniqueIndex("annotation_client_idx").on(t.authorId, t.clientId),
  ],
);

export const message = sqliteTable(
  "message",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    authorId: text("author_id").references(() => user.id, { onDelete: "set null" }),
    clientId: text("client_id"),
    /** text | data_request */
    kind: text("kind").notNull(),
    text: text("text").notNull(),
    /** JSON of a request for more data (shared/schemas/realtime.ts dataRequestSchema) */
    request: text("request", { mode: "json" }).$type<Record<string, unknown>>(),
    color: text("color").notNull(),
    seq: integer("seq").notNull(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [
    uniqueIndex("message_case_seq_idx").on(t.caseId, t.seq),
    uniqueIndex("message_client_idx").on(t.authorId, t.clientId),
  ],
);

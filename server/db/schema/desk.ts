import { sqliteTable, text, integer, primaryKey, index } from "drizzle-orm/sqlite-core";
import { user } from "./auth";
import { caseTable } from "./cases";

/**
 * The desk as its people use it: how far each reader of a case has read its live record (for the
 * unread counts of the case lists), and each user's notice settings.
 */

/**
 * How far a user has read a case's live record: the highest per-case seq (chat and marks share it,
 * ./live.ts) seen in the live review. A row appears on the first visit; no row: nothing read yet.
 */
export const caseReader = sqliteTable(
  "case_reader",
  {
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    seenSeq: integer("seen_seq").notNull().default(0),
    seenAt: integer("seen_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.caseId, t.userId] }), index("case_reader_user_idx").on(t.userId)],
);

/**
 * A user's choice for one topic of notices (shared/domain/notice-topics.ts): in the app, by mail.
 * No row: the topic's default.
 */
export const noticePreference = sqliteTable(
  "notice_preference",
  {
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    topic: text("topic").notNull(),
    inApp: integer("in_app", { mode: "boolean" }).notNull(),
    mail: integer("mail", { mode: "boolean" }).notNull(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [primaryKey({ columns: [t.userId, t.topic] })],
);

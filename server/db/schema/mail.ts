import { sqliteTable, text, integer, index } from "drizzle-orm/sqlite-core";

/**
 * The mail outbox: a row is written when a mail is requested (in the caller's transaction when it
 * has one) and sent by the dispatcher (server/mail/dispatcher.ts) after the request is answered.
 * A row is claimed with a conditional update (pending → sending), so two dispatchers never send
 * the same row; once sent (or given up) its body is cleared, because bodies carry one-time links.
 */
export const mailOutbox = sqliteTable(
  "mail_outbox",
  {
    id: text("id").primaryKey(),
    /** what the mail is for (reset_password, invite, notification…), for logs and tests */
    kind: text("kind").notNull(),
    toAddress: text("to_address").notNull(),
    subject: text("subject").notNull(),
    /** cleared once the mail is sent or given up */
    textBody: text("text_body"),
    htmlBody: text("html_body"),
    replyTo: text("reply_to"),
    status: text("status", { enum: ["pending", "sending", "sent", "failed"] }).notNull(),
    attempts: integer("attempts").notNull().default(0),
    /** when the dispatcher may (next) try it: now, or later after a failure (backoff) */
    nextAttemptAt: integer("next_attempt_at", { mode: "timestamp_ms" }).notNull(),
    /** the dispatcher holding the row while it is `sending`, and since when (a stale claim is taken back) */
    claimedBy: text("claimed_by"),
    claimedAt: integer("claimed_at", { mode: "timestamp_ms" }),
    lastError: text("last_error"),
    messageId: text("message_id"),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
    sentAt: integer("sent_at", { mode: "timestamp_ms" }),
  },
  (t) => [index("mail_outbox_due_idx").on(t.status, t.nextAttemptAt)],
);

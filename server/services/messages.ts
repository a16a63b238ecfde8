/**
 * The chat of a case: text messages and requests for more data. Numbered by the same per-case seq
 * as the annotations (one `since` covers both); the caller broadcasts after the commit.
 */
import { and, asc, eq, gt } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import { assertCanJoinCase, assertLiveWrite } from "../auth/policies/live";
import type { Actor } from "../auth/session";
import { getCaseRow } from "../workflow/records";
import { badRequest } from "../http/errors";
import { headSeq, liveStatements, nextSeq, type DbLike, type LiveActor } from "./annotations";
import type { Db } from "../db/client";
import type { DataRequest, MessageKind } from "../../shared/schemas/realtime";
import type { MessageRecord } from "../../shared/realtime";
import type { Role } from "../../shared/domain/case-status";

export type MessageRow = typeof schema.message.$inferSelect;
const { message, user } = schema;

export function presentMessage(r: MessageRow, author: { name: string | null; role: string | null }): MessageRecord {
  return {
    id: r.id,
    caseId: r.caseId,
    kind: r.kind as MessageKind,
    text: r.text,
    request: (r.request as DataRequest | null) ?? null,
    authorId: r.authorId,
    authorName: author.name,
    authorRole: (author.role as Role | null) ?? null,
    color: r.color,
    clientId: r.clientId,
    seq: r.seq,
    createdAt: r.createdAt.toISOString(),
  };
}

/** The case's messages with seq > since, in seq order. */
export function listMessages(db: DbLike, caseId: string, since = 0): MessageRecord[] {
  return db
    .select({ m: message, name: user.name, role: user.role })
    .from(message)
    .leftJoin(user, eq(user.id, message.authorId))
    .where(and(eq(message.caseId, caseId), gt(message.seq, since)))
    .orderBy(asc(message.seq))
    .all()
    .map((r) => presentMessage(r.m, { name: r.name, role: r.role }));
}

export interface PostedMessage {
  record: MessageRecord;
  /** false when a retry with the same clientId found it already stored */
  changed: boolean;
}

/**
 * Posts a message. With `request` it is a request for more data (only the claimed expert, while
 * the case is claimed or waiting for data); moving the case to "needs_data" is the queue's
 * `POST /api/cases/:id/request-data`, which may call this with the same request.
 */
export function postMessage(ctx: AppContext, actor: LiveActor, caseId: string, input: { text: string; request?: DataRequest; clientId?: string }): PostedMessage {
  return ctx.db.transaction(() => postMessageIn(ctx.db, ctx.now(), actor, caseId, input), { behavior: "immediate" });
}

/** postMessage inside a transaction the caller has open on `db`. */
export function postMessageIn(db: Db, now: Date, actor: LiveActor, caseId: string, input: { text: string; request?: DataRequest; clientId?: string }): PostedMessage {
  const kind: MessageKind = input.request ? "data_request" : "text";
  assertLiveWrite(actor, liveStatements(db).caseForPolicy.get({ id: caseId }), kind === "data_request" ? "requestData" : "chat");
  if (input.clientId) {
    const prior = db
      .select()
      .from(message)
      .where(and(eq(message.authorId, actor.id), eq(message.clientId, input.clientId)))
      .get();
    if (prior) {
      if (prior.caseId !== caseId) throw badRequest("client_id_reused", "This clientId belongs to a message on another case.");
      return { record: presentMessage(prior, { name: actor.name, role: actor.role }), changed: false };
    }
  }
  const row: MessageRow = {
    id: crypto.randomUUID(),
    caseId,
    authorId: actor.id,
    clientId: input.clientId ?? null,
    kind,
    text: input.text,
    request: (input.request as Record<string, unknown> | undefined) ?? null,
    color: actor.color,
    seq: nextSeq(db, caseId),
    createdAt: now,
  };
  db.insert(message).values(row).run();
  return { record: presentMessage(row, { name: actor.name, role: actor.role }), changed: true };
}

/** GET /api/cases/:id/messages?since= — the case's readers; one read of the chat and the head seq. */
export function messagesSince(ctx: AppContext, actor: Actor, caseId: string, since: number) {
  return ctx.db.transaction((tx) => {
    assertCanJoinCase(actor, getCaseRow(tx, caseId));
    return { caseId, seq: headSeq(tx, caseId), messages: listMessages(tx, caseId, since) };
  });
}

/**
 * The chat of a case: text messages and requests for more data. Numbered by the same per-case seq
 * as the annotations (one `since` covers both); the caller broadcasts after the commit.
 */
import { and, asc, eq, gt } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import { assertCanJoinCase, assertLiveWrite } from "../auth/policies/live";
import type { Actor } from "../auth/session";
import { getCaseRow } from "../workflow/records";
import { badRequest } from "../http/errors";
import { caseForPolicy, headSeq, nextSeq, type LiveActor } from "./annotations";
import type { DataRequest, MessageKind } from "../../shared/schemas/realtime";
import type { MessageRecord } from "../../shared/realtime";
import type { Role } from "../../shared/domain/case-status";

export type MessageRow = typeof schema.message.$inferSelect;
const { message, user } = schema;

export interface MessageInput {
  text: string;
  request?: DataRequest;
  clientId?: string;
}

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

/** The query of the case's messages with seq > since, in seq order. */
export function messagesQuery(tx: Tx, caseId: string, since = 0) {
  return tx
    .select({ m: message, name: user.name, role: user.role })
    .from(message)
    .leftJoin(user, eq(user.id, message.authorId))
    .where(and(eq(message.caseId, caseId), gt(message.seq, since)))
    .orderBy(asc(message.seq));
}

/** The case's messages with seq > since, in seq order. */
export async function listMessages(tx: Tx, caseId: string, since = 0): Promise<MessageRecord[]> {
  const rows = await messagesQuery(tx, caseId, since);
  return rows.map((r) => presentMessage(r.m, { name: r.name, role: r.role }));
}

export interface PostedMessage {
  record: MessageRecord;
  /** false when a retry with the same clientId found it already stored */
  changed: boolean;
}

export const messageKind = (input: MessageInput): MessageKind => (input.request ? "data_request" : "text");

/** A message this author already stored with this clientId (a retry), refused when it belongs to another case. */
export async function priorMessage(tx: Tx, authorId: string, clientId: string | undefined, caseId: string) {
  if (!clientId) return undefined;
  const prior = await tx
    .select()
    .from(message)
    .where(and(eq(message.authorId, authorId), eq(message.clientId, clientId)))
    .get();
  if (prior && prior.caseId !== caseId)
    throw badRequest("client_id_reused", "This clientId belongs to a message on another case.");
  return prior;
}

/** The new message's row, before its seq is known. */
export function newMessageRow(
  now: Date,
  actor: LiveActor,
  caseId: string,
  input: MessageInput,
): Omit<MessageRow, "seq"> {
  return {
    id: crypto.randomUUID(),
    caseId,
    authorId: actor.id,
    clientId: input.clientId ?? null,
    kind: messageKind(input),
    text: input.text,
    request: (input.request as Record<string, unknown> | undefined) ?? null,
    color: actor.color,
    createdAt: now,
  };
}

/**
 * Posts a message. With `request` it is a request for more data (only the claimed expert, while
 * the case is claimed or waiting for data); moving the case to "needs_data" is the queue's
 * `POST /api/cases/:id/request-data`, which may call this with the same request.
 */
export async function postMessage(
  ctx: AppContext,
  actor: LiveActor,
  caseId: string,
  input: MessageInput,
): Promise<PostedMessage> {
  const now = ctx.now();
  return ctx.db.write((tx) => postMessageIn(tx, now, actor, caseId, input));
}

/** postMessage inside the caller's write unit (the exact path). */
export async function postMessageIn(
  tx: Tx,
  now: Date,
  actor: LiveActor,
  caseId: string,
  input: MessageInput,
): Promise<PostedMessage> {
  const kind = messageKind(input);
  assertLiveWrite(actor, await caseForPolicy(tx, caseId), kind === "data_request" ? "requestData" : "chat");
  const prior = await priorMessage(tx, actor.id, input.clientId, caseId);
  if (prior) return { record: presentMessage(prior, { name: actor.name, role: actor.role }), changed: false };
  const row: MessageRow = { ...newMessageRow(now, actor, caseId, input), seq: await nextSeq(tx, caseId) };
  await tx.insert(message).values(row).run();
  return { record: presentMessage(row, { name: actor.name, role: actor.role }), changed: true };
}

/** GET /api/cases/:id/messages?since= — the case's readers; one read of the chat and the head seq. */
export async function messagesSince(ctx: AppContext, actor: Actor, caseId: string, since: number) {
  return ctx.db.read(async (tx) => {
    assertCanJoinCase(actor, await getCaseRow(tx, caseId));
    return { caseId, seq: await headSeq(tx, caseId), messages: await listMessages(tx, caseId, since) };
  });
}

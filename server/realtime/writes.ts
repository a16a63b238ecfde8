/**
 * The live writes (marks and chat) as plans for the group commit (./group-commit.ts).
 *
 * A handler checks everything first, outside any transaction (the actor, the case and the live
 * policy, the trace, a retried clientId). Its plan then writes with three statements that carry
 * those checks as a guard — the case row still has the status, shop and expert the policy saw, and
 * (for a change to a mark) the mark still has the seq it was read with:
 *
 *   1. make sure the case has its `case_seq` row (seq 0: none handed out yet);
 *   2. bump the case's seq, if the guard holds;
 *   3. write the record with seq = (the case's seq, if the guard holds) — NULL otherwise, which the
 *      NOT NULL column refuses.
 *
 * So a plan either writes its record with the next seq, or fails the whole batch (a guard that no
 * longer holds, a clientId sent twice at once); never a seq without its record. The group commit
 * runs the plans of many writes as one batch — one round trip to a libSQL server, one transaction —
 * and when the batch fails it runs each write again alone on the exact path (`exact`), which reads
 * and checks inside its own unit and answers precisely (the refusal, or the stored retry).
 */
import { and, eq, isNull, sql, type SQL } from "drizzle-orm";
import { schema, type Statement, type Tx } from "../db/client";
import type { CaseFacts } from "../workflow/policy";
import {
  newMarkRow,
  presentAnnotation,
  type AnnotationRow,
  type LiveActor,
  type Written,
} from "../services/annotations";
import {
  newMessageRow,
  presentMessage,
  type MessageInput,
  type MessageRow,
  type PostedMessage,
} from "../services/messages";
import { markSeenIn, seenStatements } from "../services/reading";
import type { AnnotationCreate } from "../../shared/schemas/realtime";

const { annotation, caseSeq, caseTable, message } = schema;

/** One live write for the group commit. */
export interface WritePlan<W extends { changed: boolean }> {
  caseId: string;
  /** the plan's statements (in order) for the batch */
  statements(q: Tx): Statement[];
  /** the write's outcome from its statements' results */
  read(results: unknown[]): W;
  /** the exact path, inside a write unit of its own */
  exact(tx: Tx): Promise<W>;
}

/** The case row still as the policy saw it. */
function caseUnchanged(c: CaseFacts): SQL {
  const expert = c.expertId === null ? isNull(caseTable.expertId) : eq(caseTable.expertId, c.expertId);
  const where = and(eq(caseTable.id, c.id), eq(caseTable.status, c.status), eq(caseTable.shopId, c.shopId), expert);
  return sql`EXISTS (SELECT 1 FROM ${caseTable} WHERE ${where})`;
}

/** A mark still at the seq it was read with, and not removed. */
function markUnchanged(a: Pick<AnnotationRow, "id" | "seq">): SQL {
  const where = and(eq(annotation.id, a.id), eq(annotation.seq, a.seq), isNull(annotation.deletedAt));
  return sql`EXISTS (SELECT 1 FROM ${annotation} WHERE ${where})`;
}

/** Statements 1 and 2 of a plan, and the seq expression of statement 3. */
function seqSteps(q: Tx, caseId: string, guard: SQL): { steps: Statement[]; seq: SQL<number> } {
  const steps: Statement[] = [
    q.insert(caseSeq).values({ caseId, seq: 0 }).onConflictDoNothing(),
    q
      .update(caseSeq)
      .set({ seq: sql`${caseSeq.seq} + 1` })
      .where(and(eq(caseSeq.caseId, caseId), guard)),
  ];
  const seq = sql<number>`(SELECT ${caseSeq.seq} FROM ${caseSeq} WHERE ${caseSeq.caseId} = ${caseId} AND ${guard})`;
  return { steps, seq };
}

function only<T>(results: unknown[], what: string): T {
  const rows = results[2] as T[];
  if (!Array.isArray(rows) || rows.length !== 1)
    throw new Error(`the batched ${what} wrote ${rows?.length ?? "no"} rows`);
  return rows[0];
}

/** A new mark (checked beforehand: the case allows it, the trace is the case's, no retry of a stored one). */
export function planCreateMark(
  c: CaseFacts,
  now: Date,
  actor: LiveActor,
  input: AnnotationCreate,
  exact: (tx: Tx) => Promise<Written>,
): WritePlan<Written> {
  const row = newMarkRow(now, actor, c.id, input);
  const { deletedAt: _none, ...values } = row;
  return {
    caseId: c.id,
    statements(q) {
      const { steps, seq } = seqSteps(q, c.id, caseUnchanged(c));
      return [
        ...steps,
        q
          .insert(annotation)
          .values({ ...values, seq })
          .returning(),
      ];
    },
    read: (results) => ({ record: presentAnnotation(only<AnnotationRow>(results, "mark"), actor.name), changed: true }),
    exact,
  };
}

/** A mark moved, relabelled or removed by its author (checked beforehand against `cur`). */
export function planChangeMark(
  c: CaseFacts,
  cur: AnnotationRow,
  set: Partial<Pick<AnnotationRow, "t0" | "t1" | "level" | "label" | "deletedAt">> & { updatedAt: Date },
  actor: LiveActor,
  exact: (tx: Tx) => Promise<Written>,
): WritePlan<Written> {
  return {
    caseId: c.id,
    statements(q) {
      const guard = sql`${caseUnchanged(c)} AND ${markUnchanged(cur)}`;
      const { steps, seq } = seqSteps(q, c.id, guard);
      return [
        ...steps,
        q
          .update(annotation)
          .set({ ...set, seq })
          .where(eq(annotation.id, cur.id))
          .returning(),
      ];
    },
    read: (results) => ({ record: presentAnnotation(only<AnnotationRow>(results, "mark"), actor.name), changed: true }),
    exact,
  };
}

/** A chat message or a request for more data (checked beforehand). */
export function planMessage(
  c: CaseFacts,
  now: Date,
  actor: LiveActor,
  input: MessageInput,
  exact: (tx: Tx) => Promise<PostedMessage>,
): WritePlan<PostedMessage> {
  const row = newMessageRow(now, actor, c.id, input);
  return {
    caseId: c.id,
    statements(q) {
      const { steps, seq } = seqSteps(q, c.id, caseUnchanged(c));
      return [
        ...steps,
        q
          .insert(message)
          .values({ ...row, seq })
          .returning(),
      ];
    },
    read: (results) => ({
      record: presentMessage(only<MessageRow>(results, "message"), { name: actor.name, role: actor.role }),
      changed: true,
    }),
    exact,
  };
}

/**
 * The plan, plus: everybody in the room (and the author) has read the case up to the record it
 * stores (server/services/reading.ts) — in the same batch, at the seq the batch hands out.
 */
export function withReaders<W extends { changed: boolean; record: { seq: number } }>(
  plan: WritePlan<W>,
  readers: readonly string[],
  at: Date,
): WritePlan<W> {
  const head = sql<number>`(SELECT ${caseSeq.seq} FROM ${caseSeq} WHERE ${caseSeq.caseId} = ${plan.caseId})`;
  return {
    ...plan,
    statements: (q) => [...plan.statements(q), ...seenStatements(q, plan.caseId, readers, head, at)],
    async exact(tx) {
      const w = await plan.exact(tx);
      if (w.changed) await markSeenIn(tx, plan.caseId, readers, w.record.seq, at);
      return w;
    },
  };
}

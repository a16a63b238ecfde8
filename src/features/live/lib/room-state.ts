import type { AnnotationCreate, DataRequest } from "../../../../shared/schemas/realtime";
import type {
  AnnotationRecord,
  EventError,
  JoinOk,
  LiveAbilities,
  MessageRecord,
  Participant,
  PointerPayload,
  ViewPayload,
} from "../../../../shared/realtime";

/**
 * The client's copy of a case's live record, kept outside React so socket callbacks apply records
 * synchronously in the order they arrive, each exactly once:
 *
 * - `lastSeq` is the highest seq up to which the copy is known complete. A record with
 *   seq = lastSeq + 1 advances it; a record the copy already holds at that seq (or later) is a
 *   duplicate and ignored; a record further ahead is applied but reported as a gap, and the
 *   caller re-joins with `since = lastSeq` (the server replays everything after it).
 * - A join's acknowledgement carries the case's current seq: once its replay is applied the copy
 *   is complete up to it.
 * - Marks and messages the user sends are shown at once as pending (with a clientId the server
 *   stores), replaced by the stored record when it arrives by acknowledgement or replay, and
 *   resent after a reconnect (the clientId makes the resend idempotent).
 */

export type ConnectionState = "connecting" | "live" | "reconnecting" | "ended" | "refused";

/** A mark as the viewer takes it: a stored record, or a pending one (drawn dashed). */
export interface LiveAnnotation {
  id: string;
  traceId: string;
  kind: AnnotationRecord["kind"];
  t0: number;
  t1: number | null;
  level: number | null;
  label: string | null;
  channel: string | null;
  color: string;
  authorId: string | null;
  authorName: string | null;
  seq?: number;
  pending?: boolean;
  /** why a pending mark was refused (it stays listed until dismissed) */
  error?: string;
  clientId?: string | null;
}

export interface LiveMessage extends Omit<MessageRecord, "seq"> {
  seq?: number;
  pending?: boolean;
  error?: string;
}

export interface RemotePointer {
  userId: string;
  name: string;
  color: string;
  traceId: string;
  t: number;
  v: number;
}

export interface PendingMark {
  clientId: string;
  draft: Omit<AnnotationCreate, "clientId">;
  error?: string;
}

export interface PendingMessage {
  clientId: string;
  text: string;
  request?: DataRequest;
  at: string;
  error?: string;
}

export interface RoomSnapshot {
  caseId: string;
  connection: ConnectionState;
  /** why the connection ended or the join was refused */
  problem: EventError | null;
  lastSeq: number;
  annotations: LiveAnnotation[];
  messages: LiveMessage[];
  participants: Participant[];
  pointers: RemotePointer[];
  /** the latest window shared by someone else */
  remoteView: ViewPayload | null;
  you: JoinOk["you"] | null;
  abilities: LiveAbilities;
  caseStatus: string | null;
}

export type ApplyResult = "applied" | "duplicate" | "gap";

const noAbilities: LiveAbilities = { annotate: false, chat: false, requestData: false };

export class RoomStore {
  private annotations = new Map<string, AnnotationRecord>();
  private messages = new Map<string, MessageRecord>();
  private pendingMarks = new Map<string, PendingMark>();
  private pendingMessages = new Map<string, PendingMessage>();
  private pointers = new Map<string, RemotePointer>();
  private participants: Participant[] = [];
  private remoteView: ViewPayload | null = null;
  private you: JoinOk["you"] | null = null;
  private abilities: LiveAbilities = noAbilities;
  private caseStatus: string | null = null;
  private connection: ConnectionState = "connecting";
  private problem: EventError | null = null;
  private listeners = new Set<() => void>();
  private snap: RoomSnapshot | null = null;
  lastSeq = 0;

  constructor(readonly caseId: string) {}

  // ----- subscription (useSyncExternalStore)
  subscribe = (fn: () => void): (() => void) => {
    this.listeners.add(fn);
    return () => this.listeners.delete(fn);
  };
  getSnapshot = (): RoomSnapshot => (this.snap ??= this.build());
  private changed(): void {
    this.snap = null;
    for (const fn of this.listeners) fn();
  }

  // ----- connection
  setConnection(c: ConnectionState, problem: EventError | null = null): void {
    if (this.connection === c && this.problem === problem) return;
    this.connection = c;
    this.problem = problem;
    if (c !== "live") this.pointers.clear();
    this.changed();
  }

  /** Applies a join's acknowledgement: its replay in seq order, then the room's state. */
  applyJoin(ack: JoinOk): void {
    if (ack.reset) {
      this.annotations.clear();
      this.messages.clear();
      this.lastSeq = 0;
    }
    const records: ({ k: "a"; r: AnnotationRecord } | { k: "m"; r: MessageRecord })[] = [
      ...ack.annotations.map((r) => ({ k: "a" as const, r })),
      ...ack.messages.map((r) => ({ k: "m" as const, r })),
    ].sort((x, y) => x.r.seq - y.r.seq);
    for (const x of records) {
      if (x.k === "a") this.upsertAnnotation(x.r);
      else this.upsertMessage(x.r);
    }
    this.lastSeq = Math.max(this.lastSeq, ack.seq);
    this.participants = ack.presence.participants;
    this.remoteView = ack.view && ack.view.userId !== ack.you.userId ? ack.view : this.remoteView;
    this.you = ack.you;
    this.abilities = ack.abilities;
    this.caseStatus = ack.caseStatus;
    this.connection = "live";
    this.problem = null;
    this.changed();
  }

  applyAnnotation(r: AnnotationRecord): ApplyResult {
    const cur = this.annotations.get(r.id);
    if (cur && cur.seq >= r.seq) return "duplicate";
    this.upsertAnnotation(r);
    return this.advance(r.seq);
  }

  applyMessage(r: MessageRecord): ApplyResult {
    if (this.messages.has(r.id)) return "duplicate";
    this.upsertMessage(r);
    return this.advance(r.seq);
  }

  private advance(seq: number): ApplyResult {
    let res: ApplyResult = "applied";
    if (seq === this.lastSeq + 1) this.lastSeq = seq;
    else if (seq > this.lastSeq + 1) res = "gap";
    this.changed();
    return res;
  }

  private upsertAnnotation(r: AnnotationRecord): void {
    const cur = this.annotations.get(r.id);
    if (!cur || cur.seq < r.seq) this.annotations.set(r.id, r);
    if (r.clientId && r.authorId && r.authorId === this.you?.userId) this.pendingMarks.delete(r.clientId);
  }

  private upsertMessage(r: MessageRecord): void {
    this.messages.set(r.id, r);
    if (r.clientId && r.authorId && r.authorId === this.you?.userId) this.pendingMessages.delete(r.clientId);
  }

  // ----- pending writes
  addPendingMark(p: PendingMark): void {
    this.pendingMarks.set(p.clientId, p);
    this.changed();
  }
  addPendingMessage(p: PendingMessage): void {
    this.pendingMessages.set(p.clientId, p);
    this.changed();
  }
  failPending(clientId: string, error: string): void {
    const m = this.pendingMarks.get(clientId);
    if (m) this.pendingMarks.set(clientId, { ...m, error });
    const g = this.pendingMessages.get(clientId);
    if (g) this.pendingMessages.set(clientId, { ...g, error });
    this.changed();
  }
  dismissPending(clientId: string): void {
    this.pendingMarks.delete(clientId);
    this.pendingMessages.delete(clientId);
    this.changed();
  }
  /** Writes not yet stored and not refused: to send (again) after a join. */
  unsent(): { marks: PendingMark[]; messages: PendingMessage[] } {
    return {
      marks: [...this.pendingMarks.values()].filter((p) => !p.error),
      messages: [...this.pendingMessages.values()].filter((p) => !p.error),
    };
  }

  // ----- ephemeral room state
  setParticipants(p: Participant[]): void {
    this.participants = p;
    const here = new Set(p.map((x) => x.userId));
    for (const id of [...this.pointers.keys()]) if (!here.has(id)) this.pointers.delete(id);
    this.changed();
  }
  setPointer(p: PointerPayload): void {
    if (p.userId === this.you?.userId) return;
    if (p.traceId === null || p.t == null || p.v == null) this.pointers.delete(p.userId);
    else
      this.pointers.set(p.userId, {
        userId: p.userId,
        name: p.name,
        color: p.color,
        traceId: p.traceId,
        t: p.t,
        v: p.v,
      });
    this.changed();
  }
  setRemoteView(v: ViewPayload): void {
    if (v.userId === this.you?.userId) return;
    this.remoteView = v;
    this.changed();
  }
  setCaseStatus(status: string): void {
    this.caseStatus = status;
    this.changed();
  }

  private build(): RoomSnapshot {
    const you = this.you;
    const annotations: LiveAnnotation[] = [...this.annotations.values()]
      .filter((a) => !a.deletedAt)
      .sort((a, b) => a.seq - b.seq)
      .map((a) => ({ ...a }));
    for (const p of this.pendingMarks.values()) {
      annotations.push({
        id: `pending:${p.clientId}`,
        clientId: p.clientId,
        traceId: p.draft.traceId,
        kind: p.draft.kind,
        t0: p.draft.t0,
        t1: p.draft.t1 ?? null,
        level: p.draft.level ?? null,
        label: p.draft.label ?? null,
        channel: p.draft.channel ?? null,
        color: you?.color ?? "#566b77",
        authorId: you?.userId ?? null,
        authorName: you?.name ?? null,
        pending: true,
        error: p.error,
      });
    }
    const messages: LiveMessage[] = [...this.messages.values()].sort((a, b) => a.seq - b.seq);
    for (const p of this.pendingMessages.values()) {
      messages.push({
        id: `pending:${p.clientId}`,
        caseId: this.caseId,
        kind: p.request ? "data_request" : "text",
        text: p.text,
        request: p.request ?? null,
        authorId: you?.userId ?? null,
        authorName: you?.name ?? null,
        authorRole: you?.role ?? null,
        color: you?.color ?? "#566b77",
        clientId: p.clientId,
        createdAt: p.at,
        pending: true,
        error: p.error,
      });
    }
    return {
      caseId: this.caseId,
      connection: this.connection,
      problem: this.problem,
      lastSeq: this.lastSeq,
      annotations,
      messages,
      participants: this.participants,
      pointers: [...this.pointers.values()],
      remoteView: this.remoteView,
      you,
      abilities: this.abilities,
      caseStatus: this.caseStatus,
    };
  }
}

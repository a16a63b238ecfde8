/**
 * The live-review socket contract (socket.io on the same server and port as the API, path
 * /socket.io). Typed event maps for both sides, the records the server sends, and the author
 * colours. Payload schemas: shared/schemas/realtime.ts. Documented in docs/api.md.
 */
import type {
  AnnotationCreate,
  AnnotationDelete,
  AnnotationKind,
  AnnotationUpdate,
  CaseJoin,
  ChatSend,
  DataRequest,
  MessageKind,
  PointerMove,
  ViewFollow,
} from "./schemas/realtime";
import type { Role } from "./domain/case-status";

export type { AnnotationKind, MessageKind, DataRequest };

/** The error of a refused event, in the API's error shape. */
export interface EventError {
  code: string;
  message: string;
  details?: unknown;
}
export type Refused = { ok: false; error: EventError };

/** A mark on a trace as stored. `deletedAt` set = a tombstone (sent by `annotation:deleted` and replays). */
export interface AnnotationRecord {
  id: string;
  caseId: string;
  traceId: string;
  kind: AnnotationKind;
  t0: number;
  t1: number | null;
  level: number | null;
  label: string | null;
  channel: string | null;
  color: string;
  authorId: string | null;
  authorName: string | null;
  clientId: string | null;
  seq: number;
  createdAt: string;
  updatedAt: string;
  deletedAt: string | null;
}

export interface MessageRecord {
  id: string;
  caseId: string;
  kind: MessageKind;
  text: string;
  request: DataRequest | null;
  authorId: string | null;
  authorName: string | null;
  authorRole: Role | null;
  color: string;
  clientId: string | null;
  seq: number;
  createdAt: string;
}

export interface Participant {
  userId: string;
  name: string;
  role: Role;
  color: string;
  typing: boolean;
  /** open sockets of this user in the room (tabs, devices) */
  connections: number;
}

export interface PresencePayload {
  caseId: string;
  participants: Participant[];
}

/** Another participant's pointer; `traceId: null` when it has left the plot (or the room). */
export interface PointerPayload {
  caseId: string;
  userId: string;
  name: string;
  color: string;
  traceId: string | null;
  t?: number;
  v?: number;
}

/** A participant's visible window (what a follower shows). */
export interface ViewPayload {
  caseId: string;
  userId: string;
  name: string;
  role: Role;
  traceId: string;
  t0: number;
  t1: number;
  at: string;
}

/** Sent by the queue after a status change commits. */
export interface CaseStatusPayload {
  caseId: string;
  status: string;
  [key: string]: unknown;
}

/** Sent by the cases service after a commit (e.g. a new trace: entity "trace", id = the trace). */
export interface CaseUpdatedPayload {
  caseId: string;
  entity: string;
  id: string;
  updatedAt: string;
}

/**
 * Where a capture upload is, as the server sees it; sent to the case room as `upload:progress` on
 * every stage change and at most twice a second while bytes arrive (server/uploads/progress.ts).
 * - sending: bytes arriving (compressed ones when the browser compresses); `totalBytes` is null
 *   while the sender is still compressing (it declares the length with the last piece)
 * - interrupted: the link dropped (or went silent) part-way; the sender resumes from `receivedBytes`
 * - resuming: the sender is back and asked where to continue
 * - queued: all bytes are in; every pool thread is busy, `queuePosition` is its place in line
 * - checking: decompressing, checking and parsing (`fraction` of the received bytes read)
 * - measuring: the channels are stored; the waveform is being measured
 * - stored: the trace exists (`traceId`); refused: `error` says why; cancelled: the sender gave up
 */
export const UPLOAD_STAGES = [
  "sending",
  "interrupted",
  "resuming",
  "queued",
  "checking",
  "measuring",
  "stored",
  "refused",
  "cancelled",
] as const;
export type UploadStage = (typeof UPLOAD_STAGES)[number];

export interface UploadProgressPayload {
  caseId: string;
  uploadId: string;
  /** the file's name as the tech gave it */
  name: string;
  by: { userId: string; name: string };
  stage: UploadStage;
  receivedBytes: number;
  totalBytes: number | null;
  /** size of the file as the tech has it (before compression), when the sender stated it */
  fileBytes: number | null;
  compressed: boolean;
  /** bytes per second over the last few seconds while sending */
  rateBytesPerS: number | null;
  /** seconds left at that rate (null while the total is unknown) */
  etaS: number | null;
  queuePosition: number | null;
  fraction: number | null;
  traceId: string | null;
  error: { code: string; message: string } | null;
  at: string;
}

/** What the actor may do in the room (the client only hides controls; the server decides). */
export interface LiveAbilities {
  annotate: boolean;
  chat: boolean;
  requestData: boolean;
}

export interface JoinOk {
  ok: true;
  caseId: string;
  /** the case's current seq: the client's new `since` once it has applied the records below */
  seq: number;
  /** the annotations with seq > since (tombstones included when since > 0), in seq order */
  annotations: AnnotationRecord[];
  /** the messages with seq > since, in seq order */
  messages: MessageRecord[];
  presence: PresencePayload;
  /** the latest shared window in the room, if any */
  view: ViewPayload | null;
  you: { userId: string; name: string; role: Role; color: string };
  abilities: LiveAbilities;
  caseStatus: string;
  /**
   * true when the client's `since` was ahead of the case (its copy is from another database, e.g.
   * after a demo reset): it must drop what it holds; the records above are then the whole case.
   */
  reset: boolean;
}
export type JoinAck = JoinOk | Refused;
export type AnnotationAck = { ok: true; annotation: AnnotationRecord } | Refused;
export type MessageAck = { ok: true; message: MessageRecord } | Refused;

export interface ClientToServerEvents {
  "case:join": (payload: CaseJoin, ack: (res: JoinAck) => void) => void;
  "annotation:create": (payload: AnnotationCreate, ack: (res: AnnotationAck) => void) => void;
  "annotation:update": (payload: AnnotationUpdate, ack: (res: AnnotationAck) => void) => void;
  "annotation:delete": (payload: AnnotationDelete, ack: (res: AnnotationAck) => void) => void;
  "chat:send": (payload: ChatSend, ack: (res: MessageAck) => void) => void;
  "chat:typing": (payload: { typing: boolean }) => void;
  "pointer:move": (payload: PointerMove) => void;
  "view:follow": (payload: ViewFollow) => void;
}

export interface ServerToClientEvents {
  "annotation:created": (a: AnnotationRecord) => void;
  "annotation:updated": (a: AnnotationRecord) => void;
  "annotation:deleted": (a: AnnotationRecord) => void;
  "chat:message": (m: MessageRecord) => void;
  presence: (p: PresencePayload) => void;
  pointer: (p: PointerPayload) => void;
  view: (v: ViewPayload) => void;
  "case:status": (s: CaseStatusPayload) => void;
  "case:updated": (u: CaseUpdatedPayload) => void;
  /** a capture upload's progress (see UploadProgressPayload) */
  "upload:progress": (p: UploadProgressPayload) => void;
  /** an in-app notification for this user (server/services/notifications.ts) */
  notification: (n: { id: string | number; kind: string; caseId: string | null; title: string }) => void;
}

/** The socket.io room of a case. */
export const caseRoom = (caseId: string) => `case:${caseId}`;
/** The socket.io room of every socket of one user. */
export const userRoom = (userId: string) => `user:${userId}`;

/** Most pointer moves the server forwards per socket per second (the rest are coalesced). */
export const POINTER_RATE_HZ = 20;
/** A typing flag clears itself after this long without a new one. */
export const TYPING_TIMEOUT_MS = 5000;

/**
 * Author colours, each at least 4.5:1 against the white plot area (WCAG 2 contrast ratio: 4.8–10)
 * and in hues the trace palette does not use (src/features/traces/lib/palette.ts: browns, teal,
 * slate and harbour blues, plum, olive, red), so a mark never reads as part of a trace. The desk
 * (experts, admins) and the shop draw from separate lists: the expert and the tech of a case never
 * share a colour.
 */
export const DESK_COLORS = ["#c2185b", "#7b1fa2", "#4527a0"] as const;
export const SHOP_COLORS = ["#2e7d32", "#8d6e00"] as const;
export const AUTHOR_COLORS = [...DESK_COLORS, ...SHOP_COLORS] as const;

/** 32-bit FNV-1a of a string. */
function fnv1a(s: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193);
  }
  return h >>> 0;
}

/** The colour of a user's marks: their own (user.color) when set, else derived from their id and role. */
export function authorColor(user: { id: string; role: Role | string; color?: string | null }): string {
  if (user.color && /^#[0-9a-fA-F]{6}$/.test(user.color)) return user.color;
  const list: readonly string[] = user.role === "expert" || user.role === "admin" ? DESK_COLORS : SHOP_COLORS;
  return list[fnv1a(user.id) % list.length];
}

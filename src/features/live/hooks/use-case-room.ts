import { useEffect, useLayoutEffect, useMemo, useRef, useSyncExternalStore } from "react";
import { createLiveSocket, type LiveSocket } from "../../../lib/socket";
import {
  RoomStore,
  type ApplyResult,
  type PendingMark,
  type PendingMessage,
  type RoomSnapshot,
} from "../lib/room-state";
import { newClientId } from "../lib/client-id";
import type { AnnotationCreate, AnnotationUpdate, DataRequest } from "../../../../shared/schemas/realtime";
import type {
  AnnotationAck,
  CaseStatusPayload,
  CaseUpdatedPayload,
  UploadProgressPayload,
} from "../../../../shared/realtime";

/** How long an acknowledgement may take before a write is treated as unsent (it is resent after a reconnect). */
const ACK_TIMEOUT_MS = 10_000;
const POINTER_GAP_MS = 50;
const VIEW_GAP_MS = 100;
const TYPING_REPEAT_MS = 2500;

export interface UseCaseRoomOptions {
  /** the case changed on the server (status, a new trace, …): refetch what shows it */
  onCaseChanged?: (u: CaseUpdatedPayload | CaseStatusPayload) => void;
  /** a capture upload's progress in this case (shared/realtime.ts UploadProgressPayload) */
  onUploadProgress?: (p: UploadProgressPayload) => void;
  /** tests and storybook-like pages may pass their own socket */
  createSocket?: () => LiveSocket;
}

export interface CaseRoom extends RoomSnapshot {
  /** adds a mark at once (pending) and sends it; it is resent after a reconnect until stored */
  createMark(draft: Omit<AnnotationCreate, "clientId">): void;
  updateMark(patch: AnnotationUpdate): Promise<AnnotationAck>;
  deleteMark(id: string): Promise<AnnotationAck>;
  /** a chat message, or with `request` a request for more data */
  sendMessage(text: string, request?: DataRequest): void;
  /** drops a refused pending mark or message */
  dismiss(clientId: string): void;
  setTyping(typing: boolean): void;
  movePointer(p: { traceId: string; t: number; v: number } | null): void;
  shareView(w: { traceId: string; t0: number; t1: number }): void;
}

/** Calls `send` at most once per `gap` ms with the latest value (the last one is never dropped). */
function trailingThrottle<T>(gap: number, send: (v: T) => void) {
  let last = 0;
  let timer: ReturnType<typeof setTimeout> | null = null;
  let pending: { v: T } | null = null;
  const fire = () => {
    timer = null;
    if (!pending) return;
    last = Date.now();
    const { v } = pending;
    pending = null;
    send(v);
  };
  return {
    push(v: T) {
      pending = { v };
      if (timer) return;
      const wait = gap - (Date.now() - last);
      if (wait <= 0) fire();
      else timer = setTimeout(fire, wait);
    },
    cancel() {
      if (timer) clearTimeout(timer);
      timer = null;
      pending = null;
    },
  };
}

/** The hook's connection to its room: the socket, whether it has joined, the outgoing throttles. */
interface Link {
  socket: LiveSocket | null;
  joined: boolean;
  typingSent: number;
  pointer: Throttle<{ traceId: string; t: number; v: number } | null> | null;
  view: Throttle<{ traceId: string; t0: number; t1: number }> | null;
}

type Throttle<T> = ReturnType<typeof trailingThrottle<T>>;

function sendMark(link: Link, store: RoomStore, p: PendingMark): void {
  const s = link.socket;
  if (!s || !link.joined) return;
  s.timeout(ACK_TIMEOUT_MS).emit("annotation:create", { ...p.draft, clientId: p.clientId }, (err, res) => {
    if (err) return; // no answer: resent after the next join
    if (res.ok) store.applyAnnotation(res.annotation);
    else store.failPending(p.clientId, res.error.message);
  });
}

function sendMsg(link: Link, store: RoomStore, p: PendingMessage): void {
  const s = link.socket;
  if (!s || !link.joined) return;
  s.timeout(ACK_TIMEOUT_MS).emit(
    "chat:send",
    { text: p.text, ...(p.request ? { request: p.request } : {}), clientId: p.clientId },
    (err, res) => {
      if (err) return;
      if (res.ok) store.applyMessage(res.message);
      else store.failPending(p.clientId, res.error.message);
    },
  );
}

/** Joins (again) with `since` = the last seq applied; sends what is still unsent once joined. */
function joiner(socket: LiveSocket, caseId: string, store: RoomStore, link: Link): () => void {
  let joining = false;
  const join = () => {
    if (joining) return;
    joining = true;
    link.joined = false;
    socket.timeout(ACK_TIMEOUT_MS).emit("case:join", { caseId, since: store.lastSeq }, (err, ack) => {
      joining = false;
      if (err) {
        // no answer: try again on this connection
        if (socket.connected) setTimeout(join, 1000);
        return;
      }
      if (!ack.ok) return store.setConnection("refused", ack.error);
      // Applied inside the callback, before any later packet on this socket is handled.
      store.applyJoin(ack);
      link.joined = true;
      const { marks, messages } = store.unsent();
      marks.forEach((m) => sendMark(link, store, m));
      messages.forEach((m) => sendMsg(link, store, m));
    });
  };
  return join;
}

/** Opens the socket and wires the room's events into the store; returns the teardown. */
function connectRoom(caseId: string, store: RoomStore, link: Link, opts: () => UseCaseRoomOptions): () => void {
  const socket = (opts().createSocket ?? createLiveSocket)();
  link.socket = socket;
  const join = joiner(socket, caseId, store, link);
  /** A record ahead of the copy (a missed one in between): catch up from the database. */
  const check = (r: ApplyResult) => {
    if (r === "gap" && socket.connected) join();
  };
  socket.on("connect", join);
  socket.on("disconnect", (reason) => {
    link.joined = false;
    if (reason === "io server disconnect") {
      store.setConnection("ended", {
        code: "disconnected",
        message: "The server closed the live connection: you were signed out or no longer have access to this case.",
      });
    } else if (reason !== "io client disconnect") {
      store.setConnection("reconnecting");
    }
  });
  socket.on("connect_error", (err) => {
    const data = (err as Error & { data?: { code?: string; message?: string } }).data;
    if (!socket.active)
      store.setConnection("ended", {
        code: data?.code ?? "refused",
        message: data?.message ?? "The live connection was refused. Sign in again.",
      });
    else store.setConnection(store.getSnapshot().connection === "connecting" ? "connecting" : "reconnecting");
  });
  socket.on("annotation:created", (a) => check(store.applyAnnotation(a)));
  socket.on("annotation:updated", (a) => check(store.applyAnnotation(a)));
  socket.on("annotation:deleted", (a) => check(store.applyAnnotation(a)));
  socket.on("chat:message", (m) => check(store.applyMessage(m)));
  socket.on("presence", (p) => p.caseId === caseId && store.setParticipants(p.participants));
  socket.on("pointer", (p) => p.caseId === caseId && store.setPointer(p));
  socket.on("view", (v) => v.caseId === caseId && store.setRemoteView(v));
  socket.on("case:status", (st) => {
    if (st.caseId !== caseId) return;
    store.setCaseStatus(st.status);
    opts().onCaseChanged?.(st);
  });
  socket.on("case:updated", (u) => u.caseId === caseId && opts().onCaseChanged?.(u));
  socket.on("upload:progress", (p) => p.caseId === caseId && opts().onUploadProgress?.(p));
  store.setConnection("connecting");
  socket.connect();
  return () => {
    socket.removeAllListeners();
    socket.disconnect();
    link.socket = null;
    link.joined = false;
  };
}

/** An update or removal of a mark, answered by the server's acknowledgement. */
function ask<E extends "annotation:update" | "annotation:delete">(
  link: Link,
  store: RoomStore,
  event: E,
  payload: E extends "annotation:update" ? AnnotationUpdate : { id: string },
) {
  return new Promise<AnnotationAck>((resolve) => {
    const s = link.socket;
    if (!s || !link.joined)
      return resolve({
        ok: false,
        error: { code: "offline", message: "Not connected: try again when the connection is back." },
      });
    (
      s.timeout(ACK_TIMEOUT_MS).emit as (
        e: string,
        p: unknown,
        cb: (err: Error | null, res: AnnotationAck) => void,
      ) => void
    )(event, payload, (err, res) => {
      if (err)
        return resolve({ ok: false, error: { code: "timeout", message: "No answer from the server: try again." } });
      if (res.ok) store.applyAnnotation(res.annotation);
      resolve(res);
    });
  });
}

/** Typing on/off, repeated at most every TYPING_REPEAT_MS while it lasts. */
function sendTyping(link: Link, typing: boolean): void {
  const s = link.socket;
  if (!s || !link.joined) return;
  const now = Date.now();
  if (typing) {
    if (now - link.typingSent < TYPING_REPEAT_MS) return;
    link.typingSent = now;
  } else {
    if (!link.typingSent) return;
    link.typingSent = 0;
  }
  s.emit("chat:typing", { typing });
}

/**
 * One case's live room: joins with `since` = the last seq applied (on every connect, so a dropped
 * connection or a server restart is caught up from the database), applies each record once in
 * seq order, shows the user's own writes at once and reconciles them with the acknowledgement,
 * and exposes the connection state ("reconnecting" while the socket is away).
 */
export function useCaseRoom(caseId: string, opts: UseCaseRoomOptions = {}): CaseRoom {
  const store = useMemo(() => new RoomStore(caseId), [caseId]);
  const linkRef = useRef<Link>({ socket: null, joined: false, typingSent: 0, pointer: null, view: null });
  const optsRef = useRef(opts);
  useLayoutEffect(() => {
    optsRef.current = opts;
  });
  useEffect(() => connectRoom(caseId, store, linkRef.current, () => optsRef.current), [caseId, store]);
  useEffect(() => {
    const link = linkRef.current;
    link.pointer = trailingThrottle(POINTER_GAP_MS, (p) => {
      if (link.joined) link.socket?.emit("pointer:move", p ?? { traceId: null });
    });
    link.view = trailingThrottle(VIEW_GAP_MS, (w) => {
      if (link.joined && w.t1 > w.t0) link.socket?.emit("view:follow", w);
    });
    return () => {
      link.pointer?.cancel();
      link.view?.cancel();
    };
  }, []);
  const snap = useSyncExternalStore(store.subscribe, store.getSnapshot, store.getSnapshot);

  return {
    ...snap,
    createMark: (draft) => {
      const p: PendingMark = { clientId: newClientId(), draft };
      store.addPendingMark(p);
      sendMark(linkRef.current, store, p);
    },
    updateMark: (patch) => ask(linkRef.current, store, "annotation:update", patch),
    deleteMark: (id) => ask(linkRef.current, store, "annotation:delete", { id }),
    sendMessage: (text, request) => {
      const p: PendingMessage = { clientId: newClientId(), text: text.trim(), request, at: new Date().toISOString() };
      store.addPendingMessage(p);
      sendMsg(linkRef.current, store, p);
      linkRef.current.typingSent = 0;
    },
    dismiss: (clientId) => store.dismissPending(clientId),
    setTyping: (typing) => sendTyping(linkRef.current, typing),
    movePointer: (p) => linkRef.current.pointer?.push(p),
    shareView: (w) => linkRef.current.view?.push(w),
  };
}

import { useCallback, useEffect, useMemo, useRef, useSyncExternalStore } from "react";
import { createLiveSocket, type LiveSocket } from "../../../lib/socket";
import { RoomStore, type ApplyResult, type PendingMark, type PendingMessage, type RoomSnapshot } from "../lib/room-state";
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

/**
 * One case's live room: joins with `since` = the last seq applied (on every connect, so a dropped
 * connection or a server restart is caught up from the database), applies each record once in
 * seq order, shows the user's own writes at once and reconciles them with the acknowledgement,
 * and exposes the connection state ("reconnecting" while the socket is away).
 */
export function useCaseRoom(caseId: string, opts: UseCaseRoomOptions = {}): CaseRoom {
  const store = useMemo(() => new RoomStore(caseId), [caseId]);
  const socketRef = useRef<LiveSocket | null>(null);
  const joinedRef = useRef(false);
  const optsRef = useRef(opts);
  optsRef.current = opts;

  const sendMark = useCallback(
    (p: PendingMark) => {
      const s = socketRef.current;
      if (!s || !joinedRef.current) return;
      s.timeout(ACK_TIMEOUT_MS).emit("annotation:create", { ...p.draft, clientId: p.clientId }, (err, res) => {
        if (err) return; // no answer: resent after the next join
        if (res.ok) store.applyAnnotation(res.annotation);
        else store.failPending(p.clientId, res.error.message);
      });
    },
    [store],
  );

  const sendMsg = useCallback(
    (p: PendingMessage) => {
      const s = socketRef.current;
      if (!s || !joinedRef.current) return;
      s.timeout(ACK_TIMEOUT_MS).emit("chat:send", { text: p.text, ...(p.request ? { request: p.request } : {}), clientId: p.clientId }, (err, res) => {
        if (err) return;
        if (res.ok) store.applyMessage(res.message);
        else store.failPending(p.clientId, res.error.message);
      });
    },
    [store],
  );

  useEffect(() => {
    const socket = (optsRef.current.createSocket ?? createLiveSocket)();
    socketRef.current = socket;
    let joining = false;

    const join = () => {
      if (joining) return;
      joining = true;
      joinedRef.current = false;
      socket.timeout(ACK_TIMEOUT_MS).emit("case:join", { caseId, since: store.lastSeq }, (err, ack) => {
        joining = false;
        if (err) {
          // no answer: try again on this connection
          if (socket.connected) setTimeout(join, 1000);
          return;
        }
        if (!ack.ok) {
          store.setConnection("refused", ack.error);
          return;
        }
        // Applied inside the callback, before any later packet on this socket is handled.
        store.applyJoin(ack);
        joinedRef.current = true;
        const { marks, messages } = store.unsent();
        marks.forEach(sendMark);
        messages.forEach(sendMsg);
      });
    };
    /** A record ahead of the copy (a missed one in between): catch up from the database. */
    const check = (r: ApplyResult) => {
      if (r === "gap" && socket.connected) join();
    };

    socket.on("connect", join);
    socket.on("disconnect", (reason) => {
      joinedRef.current = false;
      if (reason === "io server disconnect") {
        store.setConnection("ended", { code: "disconnected", message: "The server closed the live connection: you were signed out or no longer have access to this case." });
      } else if (reason !== "io client disconnect") {
        store.setConnection("reconnecting");
      }
    });
    socket.on("connect_error", (err) => {
      const data = (err as Error & { data?: { code?: string; message?: string } }).data;
      if (!socket.active) store.setConnection("ended", { code: data?.code ?? "refused", message: data?.message ?? "The live connection was refused. Sign in again." });
      else store.setConnection(store.getSnapshot().connection === "connecting" ? "connecting" : "reconnecting");
    });
    socket.on("annotation:created", (a) => check(store.applyAnnotation(a)));
    socket.on("annotation:updated", (a) => check(store.applyAnnotation(a)));
    socket.on("annotation:deleted", (a) => check(store.applyAnnotation(a)));
    socket.on("chat:message", (m) => check(store.applyMessage(m)));
    socket.on("presence", (p) => p.caseId === caseId && store.setParticipants(p.participants));
    socket.on("pointer", (p) => p.caseId === caseId && store.setPointer(p));
    socket.on("view", (v) => v.caseId === caseId && store.setRemoteView(v));
    socket.on("case:status", (s) => {
      if (s.caseId !== caseId) return;
      store.setCaseStatus(s.status);
      optsRef.current.onCaseChanged?.(s);
    });
    socket.on("case:updated", (u) => u.caseId === caseId && optsRef.current.onCaseChanged?.(u));
    socket.on("upload:progress", (p) => p.caseId === caseId && optsRef.current.onUploadProgress?.(p));
    store.setConnection("connecting");
    socket.connect();

    return () => {
      socket.removeAllListeners();
      socket.disconnect();
      socketRef.current = null;
      joinedRef.current = false;
    };
  }, [caseId, store, sendMark, sendMsg]);

  const pointer = useMemo(
    () =>
      trailingThrottle<{ traceId: string; t: number; v: number } | null>(POINTER_GAP_MS, (p) => {
        if (joinedRef.current) socketRef.current?.emit("pointer:move", p ?? { traceId: null });
      }),
    [],
  );
  const view = useMemo(
    () =>
      trailingThrottle<{ traceId: string; t0: number; t1: number }>(VIEW_GAP_MS, (w) => {
        if (joinedRef.current && w.t1 > w.t0) socketRef.current?.emit("view:follow", w);
      }),
    [],
  );
  useEffect(
    () => () => {
      pointer.cancel();
      view.cancel();
    },
    [pointer, view],
  );
  const typingSent = useRef(0);

  const snap = useSyncExternalStore(store.subscribe, store.getSnapshot, store.getSnapshot);

  const ask = useCallback(
    <E extends "annotation:update" | "annotation:delete">(event: E, payload: E extends "annotation:update" ? AnnotationUpdate : { id: string }) =>
      new Promise<AnnotationAck>((resolve) => {
        const s = socketRef.current;
        if (!s || !joinedRef.current) return resolve({ ok: false, error: { code: "offline", message: "Not connected: try again when the connection is back." } });
        (s.timeout(ACK_TIMEOUT_MS).emit as (e: string, p: unknown, cb: (err: Error | null, res: AnnotationAck) => void) => void)(event, payload, (err, res) => {
          if (err) return resolve({ ok: false, error: { code: "timeout", message: "No answer from the server: try again." } });
          if (res.ok) store.applyAnnotation(res.annotation);
          resolve(res);
        });
      }),
    [store],
  );

  return {
    ...snap,
    createMark: (draft) => {
      const p: PendingMark = { clientId: newClientId(), draft };
      store.addPendingMark(p);
      sendMark(p);
    },
    updateMark: (patch) => ask("annotation:update", patch),
    deleteMark: (id) => ask("annotation:delete", { id }),
    sendMessage: (text, request) => {
      const p: PendingMessage = { clientId: newClientId(), text: text.trim(), request, at: new Date().toISOString() };
      store.addPendingMessage(p);
      sendMsg(p);
      typingSent.current = 0;
    },
    dismiss: (clientId) => store.dismissPending(clientId),
    setTyping: (typing) => {
      const s = socketRef.current;
      if (!s || !joinedRef.current) return;
      const now = Date.now();
      if (typing) {
        if (now - typingSent.current < TYPING_REPEAT_MS) return;
        typingSent.current = now;
      } else {
        if (!typingSent.current) return;
        typingSent.current = 0;
      }
      s.emit("chat:typing", { typing });
    },
    movePointer: (p) => pointer.push(p),
    shareView: (w) => view.push(w),
  };
}

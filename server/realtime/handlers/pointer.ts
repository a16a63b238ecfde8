import { parseWith } from "../../http/validate";
import { pointerMoveSchema, viewFollowSchema } from "../../../shared/schemas/realtime";
import { caseRoom, type PointerPayload, type ViewPayload } from "../../../shared/realtime";
import type { Live, LiveSocket } from "../live";

/** pointer:move and view:follow — not stored; forwarded at most POINTER_RATE_HZ per socket. */
export function onPointer(live: Live, socket: LiveSocket): void {
  const { ctx, presence } = live;
  const local = live.local(socket);
  // The checks below may finish out of order (reads of a libSQL server): a move or a view that
  // arrived before one already passed on is out of date, and is dropped.
  const order = { pointer: { arrived: 0, passed: 0 }, view: { arrived: 0, passed: 0 } };
  const current = (o: { passed: number }, n: number) => (n > o.passed ? ((o.passed = n), true) : false);
  socket.on("pointer:move", (raw) =>
    live.quiet("pointer:move", async () => {
      const n = ++order.pointer.arrived;
      const p = parseWith(pointerMoveSchema, raw, "event");
      const { caseId } = await live.quietCheck(socket);
      if (p.traceId !== null && (await live.traceFacts(p.traceId))?.caseId !== caseId) return;
      if (!current(order.pointer, n)) return;
      live.throttled(local.pointer, p, (q) =>
        live.quiet("pointer:move", async () => {
          const { actor, caseId: room } = await live.quietCheck(socket);
          const who = { caseId: room, userId: actor.id, name: actor.name, color: actor.color };
          const out: PointerPayload =
            q.traceId === null ? { ...who, traceId: null } : { ...who, traceId: q.traceId, t: q.t, v: q.v };
          socket.volatile.to(caseRoom(room)).emit("pointer", out);
        }),
      );
    }),
  );

  socket.on("view:follow", (raw) =>
    live.quiet("view:follow", async () => {
      const n = ++order.view.arrived;
      const p = parseWith(viewFollowSchema, raw, "event");
      const { caseId } = await live.quietCheck(socket);
      if ((await live.traceFacts(p.traceId))?.caseId !== caseId) return;
      if (!current(order.view, n)) return;
      live.throttled(local.view, p, (q) =>
        live.quiet("view:follow", async () => {
          const { actor, caseId: room } = await live.quietCheck(socket);
          const at = ctx.now().toISOString();
          const v: ViewPayload = {
            caseId: room,
            userId: actor.id,
            name: actor.name,
            role: actor.role,
            traceId: q.traceId,
            t0: q.t0,
            t1: q.t1,
            at,
          };
          await presence.setView(v);
          socket.to(caseRoom(room)).emit("view", v);
        }),
      );
    }),
  );
}

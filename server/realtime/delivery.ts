/**
 * Delivery of the stored live records (marks and chat) to this node's sockets, in seq order, each
 * record to each socket once.
 *
 * Records reach a node in any order: its own commits (with the author's acknowledgement), and the
 * other nodes' commits through Redis. For each case with sockets here, a node keeps `head`, the seq
 * up to which the room has been served; a record at head + 1 goes out at once (and the records
 * held behind it), a record further ahead waits for the ones before it. If a gap stays open for
 * `gapMs` (a node died between its commit and its broadcast, or a broadcast was lost), the missing
 * records are read from the database — the database, not the broadcast, is what nobody misses.
 *
 * Each socket has a floor: the seq up to which it has what it needs (its join's replay, then what
 * it was sent). A socket joins in three steps: it is added (from then on what the room serves is
 * kept for it), the replay is read (everything committed before, so it covers what the room
 * served before the add), and the acknowledgement goes out with the replay, followed by what the
 * room served meanwhile beyond the replay's head. Joins of one case run one after another on a node.
 *
 * The author of a write gets the stored record in its acknowledgement, sent when the record's turn
 * comes, so the author too sees records in seq order; the others get it as an event.
 */
import type { AnnotationRecord, MessageRecord } from "../../shared/realtime";
import type { LiveSocket } from "./types";

export type LiveRecord = { kind: "annotation"; record: AnnotationRecord } | { kind: "message"; record: MessageRecord };

export interface Delivered {
  caseId: string;
  seq: number;
  rec: LiveRecord;
  /** the author's socket and acknowledgement, when the write was made on this node */
  origin?: { socketId: string; ack: () => void };
}

/** What a join reads: the record after `since` and the case's head, in one snapshot. */
export interface Replay {
  head: number;
  annotations: AnnotationRecord[];
  messages: MessageRecord[];
}

interface Member {
  socket: LiveSocket;
  /** null while its join's replay is being read; what the room serves meanwhile is kept in `held` */
  floor: number | null;
  held: Delivered[];
}

interface Room {
  caseId: string;
  head: number | null;
  pending: Map<number, Delivered>;
  members: Map<string, Member>;
  gapTimer: NodeJS.Timeout | null;
  joins: Promise<unknown>;
  filling: boolean;
}

export interface DeliveryOptions {
  /** the records with seq > since and the head, read from the database */
  readSince(caseId: string, since: number): Promise<Replay>;
  /** how long a gap may stay open before the database fills it; default 500 ms */
  gapMs?: number;
  onError(err: unknown): void;
}

/** The event a record goes out as. */
export function eventOf(
  rec: LiveRecord,
): "annotation:created" | "annotation:updated" | "annotation:deleted" | "chat:message" {
  if (rec.kind === "message") return "chat:message";
  const a = rec.record;
  if (a.deletedAt) return "annotation:deleted";
  return a.updatedAt === a.createdAt ? "annotation:created" : "annotation:updated";
}

/** The replay's records as one list in seq order. */
export function recordsOf(r: Replay): LiveRecord[] {
  const all: LiveRecord[] = [
    ...r.annotations.map((record) => ({ kind: "annotation" as const, record })),
    ...r.messages.map((record) => ({ kind: "message" as const, record })),
  ];
  return all.sort((a, b) => a.record.seq - b.record.seq);
}

export class LiveDelivery {
  private rooms = new Map<string, Room>();
  private readonly gapMs: number;

  constructor(private readonly opts: DeliveryOptions) {
    this.gapMs = opts.gapMs ?? 500;
  }

  /** A stored record, from this node's commit or another node's. */
  deliver(d: Delivered): void {
    const room = this.rooms.get(d.caseId);
    if (!room || (room.head !== null && d.seq <= room.head)) {
      d.origin?.ack(); // nobody here to serve, or already served (from the database)
      return;
    }
    const had = room.pending.get(d.seq);
    room.pending.set(d.seq, had && !d.origin ? had : { ...d, origin: d.origin ?? had?.origin });
    this.drain(room);
  }

  /**
   * Joins `socket` to the case's stream: `read` is the replay (called once the socket is added);
   * `send` sends the join's acknowledgement with it. What the room served meanwhile follows.
   */
  join<T>(
    socket: LiveSocket,
    caseId: string,
    read: () => Promise<Replay & T>,
    send: (replay: Replay & T) => void,
  ): Promise<void> {
    const room = this.room(caseId);
    const step = room.joins.then(async () => {
      this.leaveOthers(socket, caseId);
      const member: Member = room.members.get(socket.id) ?? { socket, floor: null, held: [] };
      member.floor = null;
      room.members.set(socket.id, member);
      let replay: Replay & T;
      try {
        replay = await read();
      } catch (err) {
        this.leave(socket, caseId);
        throw err;
      }
      if (!room.members.has(socket.id)) return; // left while reading
      // a room served to no one else starts (or restarts) at the replay's head; otherwise the others
      // still need what lies between the room's head and this replay's, and get it as it comes
      const alone = [...room.members.values()].every((m) => m === member);
      if (room.head === null || (alone && replay.head > room.head)) this.advanceTo(room, replay.head, true);
      send(replay);
      member.floor = replay.head;
      for (const d of member.held.splice(0)) this.serve(member, d);
      this.drain(room);
    });
    room.joins = step.catch(() => undefined);
    return step;
  }

  leave(socket: LiveSocket, caseId: string): void {
    const room = this.rooms.get(caseId);
    if (!room || !room.members.delete(socket.id)) return;
    if (room.members.size === 0) {
      for (const d of room.pending.values()) d.origin?.ack();
      if (room.gapTimer) clearTimeout(room.gapTimer);
      this.rooms.delete(caseId);
    }
  }

  close(): void {
    for (const room of this.rooms.values()) {
      if (room.gapTimer) clearTimeout(room.gapTimer);
      for (const d of room.pending.values()) d.origin?.ack();
    }
    this.rooms.clear();
  }

  private leaveOthers(socket: LiveSocket, caseId: string): void {
    for (const [id, room] of this.rooms) if (id !== caseId && room.members.has(socket.id)) this.leave(socket, id);
  }

  private room(caseId: string): Room {
    let room = this.rooms.get(caseId);
    if (!room) {
      room = {
        caseId,
        head: null,
        pending: new Map(),
        members: new Map(),
        gapTimer: null,
        joins: Promise.resolve(),
        filling: false,
      };
      this.rooms.set(caseId, room);
    }
    return room;
  }

  /**
   * The room's head moves to `head` without serving (the records up to it came with a replay or
   * from the database): what was held up to it is dropped, its authors answered.
   */
  private advanceTo(room: Room, head: number, force: boolean): void {
    if (!force && room.head !== null && head <= room.head) return;
    room.head = head;
    for (const [seq, d] of room.pending) {
      if (seq > head) continue;
      room.pending.delete(seq);
      d.origin?.ack();
    }
  }

  private drain(room: Room): void {
    if (room.head === null) return;
    for (;;) {
      const d = room.pending.get(room.head + 1);
      if (!d) break;
      room.pending.delete(d.seq);
      room.head = d.seq;
      this.serveRoom(room, d);
    }
    for (const seq of room.pending.keys()) if (seq <= room.head) room.pending.delete(seq);
    if (room.pending.size === 0) {
      if (room.gapTimer) clearTimeout(room.gapTimer);
      room.gapTimer = null;
    } else if (!room.gapTimer && !room.filling) {
      room.gapTimer = setTimeout(() => void this.fill(room), this.gapMs);
      room.gapTimer.unref?.();
    }
  }

  private serveRoom(room: Room, d: Delivered): void {
    for (const m of room.members.values()) {
      if (m.floor === null) m.held.push(d);
      else this.serve(m, d);
    }
    d.origin?.ack();
  }

  private serve(m: Member, d: Delivered): void {
    if (m.floor === null || d.seq <= m.floor) return;
    m.floor = d.seq;
    if (d.origin?.socketId === m.socket.id) return; // the author gets it in its acknowledgement
    const r = d.rec;
    if (r.kind === "message") m.socket.emit("chat:message", r.record);
    else m.socket.emit(eventOf(r) as "annotation:created", r.record);
  }

  /** A gap stayed open: serve what the database has after the head, then carry on. */
  private async fill(room: Room): Promise<void> {
    room.gapTimer = null;
    if (room.head === null || this.rooms.get(room.caseId) !== room) return;
    room.filling = true;
    try {
      const from = room.head;
      const replay = await this.opts.readSince(room.caseId, from);
      for (const rec of recordsOf(replay)) {
        if (room.head !== null && rec.record.seq <= room.head) continue;
        const held = room.pending.get(rec.record.seq);
        room.pending.delete(rec.record.seq);
        room.head = rec.record.seq;
        this.serveRoom(room, { caseId: room.caseId, seq: rec.record.seq, rec, origin: held?.origin });
      }
      this.advanceTo(room, replay.head, false);
    } catch (err) {
      this.opts.onError(err);
    } finally {
      room.filling = false;
      this.drain(room);
    }
  }
}

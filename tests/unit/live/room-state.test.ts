import { describe, expect, it } from "vitest";
import { RoomStore } from "../../../src/features/live/lib/room-state";
import {
  describeRequest,
  formatSeconds,
  formatVolts,
  requestParts,
} from "../../../src/features/live/lib/describe-request";
import type { AnnotationRecord, JoinOk, MessageRecord } from "../../../shared/realtime";

/**
 * The client's copy of the live record. Expected behaviour is the events contract of docs/api.md
 * ("Live review"): every stored record carries the case's seq; a join with `since` replays what
 * came after it; records are applied once, in seq order; the user's own writes are shown pending
 * and replaced by the stored record.
 */

const me = { userId: "u-tech", name: "Robin Marsh", role: "technician" as const, color: "#0f7a4a" };

function ann(seq: number, over: Partial<AnnotationRecord> = {}): AnnotationRecord {
  return {
    id: `a${seq}`,
    caseId: "c1",
    traceId: "t1",
    kind: "pin",
    t0: seq / 1000,
    t1: null,
    level: null,
    label: `m${seq}`,
    channel: null,
    color: "#b4235a",
    authorId: "u-exp",
    authorName: "Sam Okafor",
    clientId: null,
    seq,
    createdAt: "2030-01-01T00:00:00.000Z",
    updatedAt: "2030-01-01T00:00:00.000Z",
    deletedAt: null,
    ...over,
  };
}
function msg(seq: number, over: Partial<MessageRecord> = {}): MessageRecord {
  return {
    id: `m${seq}`,
    caseId: "c1",
    kind: "text",
    text: `hello ${seq}`,
    request: null,
    authorId: "u-exp",
    authorName: "Sam Okafor",
    authorRole: "expert",
    color: "#b4235a",
    clientId: null,
    seq,
    createdAt: "2030-01-01T00:00:00.000Z",
    ...over,
  };
}
function join(
  seq: number,
  annotations: AnnotationRecord[] = [],
  messages: MessageRecord[] = [],
  reset = false,
): JoinOk {
  return {
    ok: true,
    caseId: "c1",
    seq,
    annotations,
    messages,
    presence: { caseId: "c1", participants: [] },
    view: null,
    you: me,
    abilities: { annotate: true, chat: true, requestData: false },
    caseStatus: "claimed",
    reset,
  };
}

describe("RoomStore", () => {
  it("applies a join's replay in seq order and then live records once each", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(3, [ann(1), ann(3)], [msg(2)]));
    expect(s.lastSeq).toBe(3);
    expect(s.getSnapshot().annotations.map((a) => a.id)).toEqual(["a1", "a3"]);
    expect(s.getSnapshot().messages.map((m) => m.id)).toEqual(["m2"]);
    expect(s.applyAnnotation(ann(4))).toBe("applied");
    expect(s.applyAnnotation(ann(4))).toBe("duplicate");
    expect(s.applyMessage(msg(5))).toBe("applied");
    expect(s.applyMessage(msg(5))).toBe("duplicate");
    expect(s.lastSeq).toBe(5);
    expect(s.getSnapshot().annotations).toHaveLength(3);
  });

  it("reports a gap and does not advance past it; the replay after it fills the gap exactly once", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(2, [ann(1), ann(2)]));
    expect(s.applyAnnotation(ann(5))).toBe("gap");
    expect(s.lastSeq).toBe(2); // a re-join asks for since = 2
    s.applyJoin(join(5, [ann(3), ann(4), ann(5)]));
    expect(s.lastSeq).toBe(5);
    expect(s.getSnapshot().annotations.map((a) => a.seq)).toEqual([1, 2, 3, 4, 5]);
  });

  it("an update replaces the record, a tombstone removes it, an older copy is ignored", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(1, [ann(1)]));
    s.applyAnnotation({ ...ann(1), seq: 2, label: "moved" });
    expect(s.getSnapshot().annotations[0]).toMatchObject({ id: "a1", label: "moved", seq: 2 });
    expect(s.applyAnnotation(ann(1))).toBe("duplicate");
    s.applyAnnotation({ ...ann(1), seq: 3, deletedAt: "2030-01-01T00:01:00.000Z" });
    expect(s.getSnapshot().annotations).toEqual([]);
    expect(s.lastSeq).toBe(3);
  });

  it("shows the user's own mark at once, pending, and swaps it for the stored one (by ack or replay)", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(0));
    s.addPendingMark({ clientId: "cid-00000001", draft: { traceId: "t1", kind: "pin", t0: 0.01, label: "firing" } });
    s.addPendingMessage({ clientId: "cid-00000002", text: "on my way", at: "2030-01-01T00:00:00.000Z" });
    let snap = s.getSnapshot();
    expect(snap.annotations).toMatchObject([{ pending: true, color: me.color, label: "firing", authorId: me.userId }]);
    expect(snap.messages).toMatchObject([{ pending: true, text: "on my way" }]);
    expect(s.unsent().marks).toHaveLength(1);

    s.applyAnnotation(ann(1, { authorId: me.userId, clientId: "cid-00000001", label: "firing" }));
    // the replay after a reconnect brings the message that was stored before the drop
    s.applyJoin(join(2, [], [msg(2, { authorId: me.userId, clientId: "cid-00000002", text: "on my way" })]));
    snap = s.getSnapshot();
    expect(snap.annotations).toMatchObject([{ id: "a1", seq: 1 }]);
    expect(snap.annotations[0].pending).toBeUndefined();
    expect(snap.messages.map((m) => m.id)).toEqual(["m2"]);
    expect(s.unsent()).toEqual({ marks: [], messages: [] });
  });

  it("keeps a refused write listed with its reason until dismissed, and does not resend it", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(0));
    s.addPendingMark({ clientId: "cid-00000003", draft: { traceId: "t1", kind: "pin", t0: 9 } });
    s.failPending("cid-00000003", "Check t0: the capture runs from 0 s to 0.1 s.");
    expect(s.getSnapshot().annotations[0]).toMatchObject({ pending: true, error: expect.stringContaining("t0") });
    expect(s.unsent().marks).toEqual([]);
    s.dismissPending("cid-00000003");
    expect(s.getSnapshot().annotations).toEqual([]);
  });

  it("a reset join drops a copy from another database", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(9, [ann(9)]));
    s.applyJoin(join(1, [ann(1, { id: "fresh" })], [], true));
    expect(s.lastSeq).toBe(1);
    expect(s.getSnapshot().annotations.map((a) => a.id)).toEqual(["fresh"]);
  });

  it("drops pointers of participants who left and ignores the user's own", () => {
    const s = new RoomStore("c1");
    s.applyJoin(join(0));
    s.setPointer({ caseId: "c1", userId: "u-exp", name: "Sam", color: "#b4235a", traceId: "t1", t: 0.01, v: 3 });
    s.setPointer({ caseId: "c1", userId: me.userId, name: me.name, color: me.color, traceId: "t1", t: 0.02, v: 1 });
    expect(s.getSnapshot().pointers.map((p) => p.userId)).toEqual(["u-exp"]);
    s.setParticipants([
      { userId: me.userId, name: me.name, role: "technician", color: me.color, typing: false, connections: 1 },
    ]);
    expect(s.getSnapshot().pointers).toEqual([]);
  });
});

describe("describing a request for more data", () => {
  it("names the capture, the cylinder and the settings in scope units", () => {
    // 0.002 s = 2 ms and 0.5 V = 500 mV: SI prefixes (BIPM, The International System of Units, 9th ed., Table 7)
    expect(formatSeconds(0.002)).toBe("2 ms");
    expect(formatSeconds(5e-5)).toBe("50 µs");
    expect(formatVolts(0.5)).toBe("500 mV");
    expect(formatVolts(5)).toBe("5 V");
    const r = {
      capture: "secondary-ignition" as const,
      cylinder: 4,
      settings: { voltsPerDiv: 5, timePerDivS: 0.002, triggerSlope: "rising" as const, triggerLevel: 2 },
      conditions: "warm, 2500 rpm",
    };
    expect(requestParts(r)).toEqual([
      "Secondary ignition",
      "cylinder 4",
      "5 V/div",
      "2 ms/div",
      "trigger rising at 2 V",
    ]);
    expect(describeRequest(r, "Check the burn time")).toBe(
      "Secondary ignition, cylinder 4, 5 V/div, 2 ms/div, trigger rising at 2 V; conditions: warm, 2500 rpm. Check the burn time",
    );
  });
});

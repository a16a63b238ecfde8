import { useMemo, useRef, useState } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { TraceViewer, type TraceViewerHandle } from "../../../features/traces/components/trace-viewer";
import { AnnotationList } from "../../../features/traces/components/annotation-list";
import { traceUnits } from "../../../lib/trace-units";
import type { Annotation, MarkDraft, TraceInfo } from "../../../features/traces/types";
import { useCaseRoom, type CaseRoom } from "../../../features/live/hooks/use-case-room";
import { useFollow } from "../../../features/live/hooks/use-follow";
import { ConnectionBanner } from "../../../features/live/components/connection-banner";
import { PresenceList } from "../../../features/live/components/presence-list";
import { FollowToggle } from "../../../features/live/components/follow-toggle";
import { ChatPanel } from "../../../features/live/components/chat-panel";
import { ReviewSheet } from "../../../features/live/components/review-sheet";
import { describeRequest } from "../../../features/live/lib/describe-request";
import { caseKeys } from "../../../features/cases/api/paths";
import { api } from "../../../lib/api-client";
import { useMediaQuery } from "../../../lib/use-media-query";
import type { DataRequest } from "../../../../shared/schemas/realtime";
import { IncomingUploads, useIncomingUploads } from "../../../features/uploads/components/incoming-uploads";

/** Desk: plot and chat side by side. Below it the chat (and on a phone the marks) are in a sheet. */
export const DESK_QUERY = "(min-width: 1024px)";
/** A phone: the plot runs to the screen's edges; the marks join the chat in the sheet. */
export const WIDE_QUERY = "(min-width: 640px)";

/** One array while the traces stay the same (the page maps its traces on every render). */
function useStableTraces(given: TraceInfo[]): TraceInfo[] {
  const key = given.map((t) => `${t.id}:${t.samples}:${t.analysis ? 1 : 0}`).join("|");
  const [kept, setKept] = useState({ key, traces: given });
  if (kept.key !== key) setKept({ key, traces: given });
  return kept.key === key ? kept.traces : given;
}

/**
 * Messages from others that arrived since the chat was last in view (a count for the dock's
 * button); what the first join brings counts as seen.
 */
function useUnread(room: CaseRoom, chatInView: boolean): number {
  const others = room.messages.filter((m) => m.seq != null && m.authorId !== room.you?.userId);
  const last = others.reduce((x, m) => Math.max(x, m.seq ?? 0), 0);
  const [seen, setSeen] = useState<number | null>(null);
  if ((seen === null && room.connection === "live") || (chatInView && seen !== null && seen !== last)) setSeen(last);
  return chatInView || seen === null ? 0 : others.filter((m) => (m.seq ?? 0) > seen).length;
}

function OwnMarkActions({
  room,
  mark,
  onRemoved,
}: {
  room: CaseRoom;
  mark: CaseRoom["annotations"][number];
  onRemoved: () => void;
}) {
  return (
    <div className="flex flex-wrap items-center gap-2 px-3 text-sm sm:px-0">
      <span className="text-ink-700">Your mark{mark.label ? ` “${mark.label}”` : ""}:</span>
      <button
        type="button"
        className="min-h-11 rounded-lg border border-ink-300 px-3 font-semibold text-ink-800 hover:bg-ink-50"
        onClick={() => {
          const label = window.prompt("New label", mark.label ?? "");
          if (label !== null) void room.updateMark({ id: mark.id, label: label.trim() || null });
        }}
      >
        Edit label
      </button>
      <button
        type="button"
        className="min-h-11 rounded-lg px-3 font-semibold text-alarm-600 hover:bg-alarm-500/10"
        onClick={() => void room.deleteMark(mark.id).then((r) => r.ok && onRemoved())}
      >
        Remove
      </button>
    </div>
  );
}

/**
 * The title with the connection's state, who is here and follow mode: one row on a phone (compact),
 * the presence and follow toggle on a row of their own elsewhere.
 */
function LiveHeader({ room, follow, phone }: { room: CaseRoom; follow: ReturnType<typeof useFollow>; phone: boolean }) {
  const shop = room.you?.role === "technician" || room.you?.role === "owner";
  return (
    <>
      <div className={`flex flex-wrap items-center gap-x-3 gap-y-2 ${phone ? "px-3" : ""}`}>
        <h2 id="live-title" className="text-lg font-bold text-ink-900">
          Live review
        </h2>
        {phone ? <PresenceList participants={room.participants} youId={room.you?.userId} compact /> : null}
        <div className="min-w-0 flex-1">
          <ConnectionBanner
            connection={room.connection}
            problem={room.problem}
            onRetry={() => window.location.reload()}
          />
        </div>
        {phone && room.you ? (
          <FollowToggle
            following={follow.following}
            onChange={follow.setFollowing}
            leaderName={follow.leader?.name}
            side={shop ? "expert" : "technician"}
            compact
          />
        ) : null}
      </div>
      {phone ? null : (
        <div className="flex flex-wrap items-end justify-between gap-3">
          <PresenceList participants={room.participants} youId={room.you?.userId} />
          {room.you ? (
            <FollowToggle
              following={follow.following}
              onChange={follow.setFollowing}
              leaderName={follow.leader?.name}
              side={shop ? "expert" : "technician"}
            />
          ) : null}
        </div>
      )}
    </>
  );
}

/**
 * The live review of a case: the traces with everyone's marks and pointers, follow mode, who is
 * here, and the chat with requests for more data. On a desk the plot and the chat sit side by side;
 * on a tablet or a phone the plot takes the width and the chat (with the marks, on a phone) is one
 * tap away in a sheet raised from a dock at the bottom of the screen. Composes the trace viewer
 * (features/traces) with the live room (features/live).
 */
export function LiveReview({
  caseId,
  traces: given,
  flaggedTraceId,
}: {
  caseId: string;
  traces: TraceInfo[];
  flaggedTraceId?: string;
}) {
  const qc = useQueryClient();
  const traces = useStableTraces(given);
  const incoming = useIncomingUploads(caseId);
  const room = useCaseRoom(caseId, {
    // a status change or a new upload (with its analysis): refetch the case, which lists the traces
    onCaseChanged: () => void qc.invalidateQueries({ queryKey: caseKeys.detail(caseId) }),
    onUploadProgress: incoming.onProgress,
  });
  const follow = useFollow(room.remoteView, room.you?.role);
  const [selected, setSelected] = useState<string | null>(null);
  const [sheet, setSheet] = useState<string | null>(null);
  const desk = useMediaQuery(DESK_QUERY);
  const phone = !useMediaQuery(WIDE_QUERY);
  const viewer = useRef<TraceViewerHandle>(null);
  const viewerBox = useRef<HTMLDivElement>(null);
  const unread = useUnread(room, desk || sheet === "chat");

  const pointers = useMemo(
    () => room.pointers.filter((p) => traces.some((t) => t.id === p.traceId)),
    [room.pointers, traces],
  );
  const selectedMark = room.annotations.find((a) => a.id === selected && !a.pending);
  const canEditSelected = !!selectedMark && selectedMark.authorId === room.you?.userId && room.abilities.annotate;

  const send = (text: string, request?: DataRequest) => {
    room.sendMessage(text, request);
    // A request for more data also moves a claimed case to "waiting for data" (the queue's endpoint).
    if (request && room.caseStatus === "claimed") {
      void api
        .post(`/api/cases/${encodeURIComponent(caseId)}/request-data`, {
          message: describeRequest(request, text).slice(0, 2000),
        })
        .catch(() => {});
    }
  };
  /** a mark chosen in the sheet's list: lower the sheet and show it on the plot */
  const openMark = (a: Annotation) => {
    setSelected(a.id);
    setSheet(null);
    viewer.current?.jumpTo(a);
    viewerBox.current?.scrollIntoView({ block: "start", behavior: "smooth" });
  };

  const chat = (
    <ChatPanel
      className={desk ? "max-h-[40rem] lg:sticky lg:top-4" : "h-full border-0"}
      shown={desk || sheet === "chat"}
      messages={room.messages}
      participants={room.participants}
      youId={room.you?.userId}
      abilities={room.abilities}
      onSend={send}
      onTyping={room.setTyping}
      onDismiss={room.dismiss}
    />
  );
  const markList = (
    <AnnotationList
      annotations={room.annotations}
      onJump={openMark}
      selectedId={selected}
      traceNames={Object.fromEntries(traces.map((t) => [t.id, t.name]))}
      traceOrder={traces.map((t) => t.id)}
      units={Object.fromEntries(traces.map((t) => [t.id, traceUnits(t)]))}
      maxHeightClass=""
    />
  );

  return (
    <section
      aria-labelledby="live-title"
      className={`space-y-3 bg-white ${phone ? "-mx-4 border-y border-ink-200 pt-3 pb-2" : "rounded-xl border border-ink-200 p-4 shadow-sm sm:p-5"}`}
    >
      <LiveHeader room={room} follow={follow} phone={phone} />
      <div className={desk ? "grid grid-cols-[minmax(0,1fr)_22rem] gap-4" : ""}>
        <div ref={viewerBox} className="min-w-0 scroll-mt-2 space-y-2">
          <IncomingUploads uploads={incoming.uploads} youId={room.you?.userId} />
          {traces.length ? (
            <TraceViewer
              ref={viewer}
              traces={traces}
              flaggedTraceId={flaggedTraceId}
              annotations={room.annotations}
              pointers={pointers}
              onPointerMove={(p) => room.movePointer(p)}
              viewWindow={follow.viewWindow}
              onViewChange={(w) => room.shareView(w)}
              onCreateMark={room.abilities.annotate ? (d: MarkDraft) => room.createMark(d) : undefined}
              onSelectAnnotation={setSelected}
              selectedAnnotationId={selected}
              showAnnotationList={!phone}
              variant={phone ? "flush" : "card"}
            />
          ) : (
            <p className="px-3 text-ink-600 sm:px-0">No traces on this case yet.</p>
          )}
          {canEditSelected ? (
            <OwnMarkActions room={room} mark={selectedMark} onRemoved={() => setSelected(null)} />
          ) : null}
        </div>
        {desk ? chat : null}
      </div>
      {desk ? null : (
        <ReviewSheet
          label="Chat and marks"
          open={sheet}
          onOpen={setSheet}
          tabs={[
            { id: "chat", label: "Chat", badge: unread ? `${unread} new` : null, content: chat },
            ...(phone
              ? [
                  {
                    id: "marks",
                    label: "Marks",
                    badge: room.annotations.length ? String(room.annotations.length) : null,
                    content: markList,
                  },
                ]
              : []),
          ]}
        />
      )}
    </section>
  );
}

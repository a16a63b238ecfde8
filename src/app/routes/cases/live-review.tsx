import { useMemo, useState } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { TraceViewer } from "../../../features/traces/components/trace-viewer";
import type { MarkDraft, TraceInfo } from "../../../features/traces/types";
import { useCaseRoom } from "../../../features/live/hooks/use-case-room";
import { useFollow } from "../../../features/live/hooks/use-follow";
import { ConnectionBanner } from "../../../features/live/components/connection-banner";
import { PresenceList } from "../../../features/live/components/presence-list";
import { FollowToggle } from "../../../features/live/components/follow-toggle";
import { ChatPanel } from "../../../features/live/components/chat-panel";
import { describeRequest } from "../../../features/live/lib/describe-request";
import { caseKeys } from "../../../features/cases/api/paths";
import { api } from "../../../lib/api-client";
import type { DataRequest } from "../../../../shared/schemas/realtime";
import { IncomingUploads, useIncomingUploads } from "../../../features/uploads/components/incoming-uploads";

/**
 * The live review of a case: the traces with everyone's marks and pointers, follow mode, who is
 * here, and the chat with requests for more data. Composes the trace viewer (features/traces) with
 * the live room (features/live); marks are made with the viewer's tools (keys P, S, L, N).
 */
export function LiveReview({ caseId, traces: given }: { caseId: string; traces: TraceInfo[] }) {
  const qc = useQueryClient();
  // the page maps its traces on every render: keep one array while the traces stay the same
  const traceKey = given.map((t) => `${t.id}:${t.samples}:${t.analysis ? 1 : 0}`).join("|");
  // eslint-disable-next-line react-hooks/exhaustive-deps
  const traces = useMemo(() => given, [traceKey]);
  const incoming = useIncomingUploads(caseId);
  const room = useCaseRoom(caseId, {
    // a status change or a new upload (with its analysis): refetch the case, which lists the traces
    onCaseChanged: () => void qc.invalidateQueries({ queryKey: caseKeys.detail(caseId) }),
    onUploadProgress: incoming.onProgress,
  });
  const follow = useFollow(room.remoteView, room.you?.role);
  const [selected, setSelected] = useState<string | null>(null);
  const shop = room.you?.role === "technician" || room.you?.role === "owner";

  const pointers = useMemo(() => room.pointers.filter((p) => traces.some((t) => t.id === p.traceId)), [room.pointers, traces]);
  const selectedMark = room.annotations.find((a) => a.id === selected && !a.pending);
  const canEditSelected = !!selectedMark && selectedMark.authorId === room.you?.userId && room.abilities.annotate;

  const send = (text: string, request?: DataRequest) => {
    room.sendMessage(text, request);
    // A request for more data also moves a claimed case to "waiting for data" (the queue's endpoint).
    if (request && room.caseStatus === "claimed") {
      void api.post(`/api/cases/${encodeURIComponent(caseId)}/request-data`, { message: describeRequest(request, text).slice(0, 2000) }).catch(() => {});
    }
  };

  return (
    <section aria-labelledby="live-title" className="space-y-3 rounded-xl border border-ink-200 bg-white p-4 shadow-sm sm:p-5">
      <div className="flex flex-wrap items-center gap-3">
        <h2 id="live-title" className="text-lg font-bold text-ink-900">
          Live review
        </h2>
        <div className="min-w-0 flex-1">
          <ConnectionBanner connection={room.connection} problem={room.problem} onRetry={() => window.location.reload()} />
        </div>
      </div>
      <div className="flex flex-wrap items-end justify-between gap-3">
        <PresenceList participants={room.participants} youId={room.you?.userId} />
        {room.you ? <FollowToggle following={follow.following} onChange={follow.setFollowing} leaderName={follow.leader?.name} side={shop ? "expert" : "technician"} /> : null}
      </div>
      <div className="grid gap-4 xl:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="min-w-0 space-y-2">
          <IncomingUploads uploads={incoming.uploads} youId={room.you?.userId} />
          {traces.length ? (
            <TraceViewer
              traces={traces}
              annotations={room.annotations}
              pointers={pointers}
              onPointerMove={(p) => room.movePointer(p)}
              viewWindow={follow.viewWindow}
              onViewChange={(w) => room.shareView(w)}
              onCreateMark={room.abilities.annotate ? (d: MarkDraft) => room.createMark(d) : undefined}
              onSelectAnnotation={setSelected}
              selectedAnnotationId={selected}
              showAnnotationList
            />
          ) : (
            <p className="text-ink-600">No traces on this case yet.</p>
          )}
          {canEditSelected ? (
            <div className="flex flex-wrap items-center gap-2 text-sm">
              <span className="text-ink-700">Your mark{selectedMark.label ? ` “${selectedMark.label}”` : ""}:</span>
              <button
                type="button"
                className="min-h-11 rounded-lg border border-ink-300 px-3 font-semibold text-ink-800 hover:bg-ink-50"
                onClick={() => {
                  const label = window.prompt("New label", selectedMark.label ?? "");
                  if (label !== null) void room.updateMark({ id: selectedMark.id, label: label.trim() || null });
                }}
              >
                Edit label
              </button>
              <button
                type="button"
                className="min-h-11 rounded-lg px-3 font-semibold text-alarm-600 hover:bg-alarm-500/10"
                onClick={() => void room.deleteMark(selectedMark.id).then((r) => r.ok && setSelected(null))}
              >
                Remove
              </button>
            </div>
          ) : null}
        </div>
        <ChatPanel
          className="max-h-[40rem]"
          messages={room.messages}
          participants={room.participants}
          youId={room.you?.userId}
          abilities={room.abilities}
          onSend={send}
          onTyping={room.setTyping}
          onDismiss={room.dismiss}
        />
      </div>
    </section>
  );
}

import type { EventError } from "../../../../shared/realtime";
import type { ConnectionState } from "../lib/room-state";

const TEXT: Record<ConnectionState, { label: string; tone: string; dot: string }> = {
  connecting: {
    label: "Connecting to the live review…",
    tone: "border-ink-200 bg-ink-50 text-ink-700",
    dot: "bg-ink-400 animate-pulse",
  },
  live: { label: "Live", tone: "border-verdigris-500/40 bg-white text-verdigris-600", dot: "bg-verdigris-500" },
  reconnecting: {
    label: "Reconnecting… Your marks and messages are kept and sent when the connection is back.",
    tone: "border-kiln-300 bg-kiln-50 text-kiln-700",
    dot: "bg-kiln-500 animate-pulse",
  },
  ended: { label: "Disconnected.", tone: "border-alarm-500 bg-white text-alarm-600", dot: "bg-alarm-500" },
  refused: {
    label: "You cannot join this case's live review.",
    tone: "border-alarm-500 bg-white text-alarm-600",
    dot: "bg-alarm-500",
  },
};

/** The live connection's state, always visible above the review (announced politely to screen readers). */
export function ConnectionBanner({
  connection,
  problem,
  onRetry,
}: {
  connection: ConnectionState;
  problem: EventError | null;
  onRetry?: () => void;
}) {
  const t = TEXT[connection];
  return (
    <div
      role="status"
      aria-live="polite"
      data-connection={connection}
      className={`flex min-h-11 items-center gap-2 rounded-lg border px-3 py-2 text-sm font-semibold ${t.tone}`}
    >
      <span aria-hidden="true" className={`h-2.5 w-2.5 flex-none rounded-full ${t.dot}`} />
      <span className="min-w-0 flex-1">
        {t.label}
        {problem && (connection === "ended" || connection === "refused") ? (
          <span className="font-normal"> {problem.message}</span>
        ) : null}
      </span>
      {onRetry && (connection === "ended" || connection === "refused") ? (
        <button type="button" onClick={onRetry} className="min-h-9 rounded-md px-2 underline">
          Reload
        </button>
      ) : null}
    </div>
  );
}

/**
 * Follow mode switch: while on, the viewer shows the zoom window and trace the other side shares.
 * It sits in the review's header, never over the plot; `compact` (a phone) says it in fewer words.
 */
export function FollowToggle({
  following,
  onChange,
  leaderName,
  side,
  compact = false,
}: {
  following: boolean;
  onChange: (on: boolean) => void;
  leaderName?: string | null;
  side: "expert" | "technician";
  compact?: boolean;
}) {
  const long = following ? `Following ${leaderName ?? `the ${side}`}'s view` : `Follow the ${side}'s view`;
  return (
    <button
      type="button"
      role="switch"
      aria-checked={following}
      aria-label={compact ? long : undefined}
      onClick={() => onChange(!following)}
      className={`inline-flex min-h-11 items-center gap-2 rounded-lg border px-3 text-sm font-semibold ${following ? "border-verdigris-600 bg-verdigris-600 text-white" : "border-ink-300 bg-white text-ink-800 hover:bg-ink-50"}`}
    >
      <span aria-hidden="true" className={`relative h-5 w-9 rounded-full ${following ? "bg-white/30" : "bg-ink-200"}`}>
        <span
          className={`absolute top-0.5 h-4 w-4 rounded-full bg-white shadow transition-all ${following ? "left-4.5" : "left-0.5"}`}
        />
      </span>
      {compact ? "Follow" : long}
    </button>
  );
}

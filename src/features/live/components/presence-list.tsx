import type { Participant } from "../../../../shared/realtime";

const ROLE: Record<string, string> = { technician: "Technician", owner: "Shop owner", expert: "Expert", admin: "Desk" };

/**
 * Who is in the live review now, each in the colour of their marks; "typing…" beside whoever types.
 * `compact` (a phone): initials only, the names and roles kept for screen readers and as tooltips.
 */
export function PresenceList({
  participants,
  youId,
  compact = false,
}: {
  participants: Participant[];
  youId?: string | null;
  compact?: boolean;
}) {
  const nameOf = (p: Participant) => (p.userId === youId ? `${p.name} (you)` : p.name);
  return (
    <div className={compact ? "flex items-center gap-2" : undefined}>
      <h3 className={compact ? "sr-only" : "text-sm font-semibold text-ink-700"}>Here now</h3>
      {participants.length === 0 ? (
        <p className="text-sm text-ink-500">Nobody yet.</p>
      ) : (
        <ul className={compact ? "flex gap-1" : "mt-1 flex flex-wrap gap-2"} aria-label="Participants">
          {participants.map((p) => (
            <li
              key={p.userId}
              title={compact ? `${nameOf(p)} · ${ROLE[p.role] ?? p.role}` : undefined}
              className={
                compact
                  ? "relative"
                  : "flex min-h-9 items-center gap-2 rounded-full border border-ink-200 bg-white py-1 pl-1 pr-3 text-sm"
              }
            >
              <span
                aria-hidden="true"
                className="flex h-7 w-7 items-center justify-center rounded-full text-xs font-bold text-white"
                style={{ background: p.color }}
              >
                {p.name.trim().charAt(0).toUpperCase() || "?"}
              </span>
              <span className={compact ? "sr-only" : undefined}>
                <span className="font-semibold text-ink-900">{nameOf(p)}</span>
                <span className="text-ink-500"> · {ROLE[p.role] ?? p.role}</span>
                {p.typing && p.userId !== youId ? <span className="text-kiln-700"> · typing…</span> : null}
              </span>
              {compact && p.typing && p.userId !== youId ? (
                <span
                  aria-hidden="true"
                  className="absolute -right-0.5 -bottom-0.5 h-2.5 w-2.5 rounded-full bg-kiln-500 ring-2 ring-white"
                />
              ) : null}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

import type { Participant } from "../../../../shared/realtime";

const ROLE: Record<string, string> = { technician: "Technician", owner: "Shop owner", expert: "Expert", admin: "Desk" };

/** Who is in the live review now, each in the colour of their marks; "typing…" beside whoever types. */
export function PresenceList({ participants, youId }: { participants: Participant[]; youId?: string | null }) {
  return (
    <div>
      <h3 className="text-sm font-semibold text-ink-700">Here now</h3>
      {participants.length === 0 ? (
        <p className="text-sm text-ink-500">Nobody yet.</p>
      ) : (
        <ul className="mt-1 flex flex-wrap gap-2" aria-label="Participants">
          {participants.map((p) => (
            <li key={p.userId} className="flex min-h-9 items-center gap-2 rounded-full border border-ink-200 bg-white py-1 pl-1 pr-3 text-sm">
              <span aria-hidden="true" className="flex h-7 w-7 items-center justify-center rounded-full text-xs font-bold text-white" style={{ background: p.color }}>
                {p.name.trim().charAt(0).toUpperCase() || "?"}
              </span>
              <span>
                <span className="font-semibold text-ink-900">{p.userId === youId ? `${p.name} (you)` : p.name}</span>
                <span className="text-ink-500"> · {ROLE[p.role] ?? p.role}</span>
                {p.typing && p.userId !== youId ? <span className="text-kiln-700"> · typing…</span> : null}
              </span>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

import { useSetAvailability } from "../api/queue-actions";

/** Available ↔ away: away experts are not offered new cases (they can still claim from the queue). */
export function AvailabilityToggle({ available }: { available: boolean }) {
  const m = useSetAvailability();
  const on = m.isPending ? !available : available;
  return (
    <div className="flex flex-wrap items-center gap-3">
      <button
        type="button"
        role="switch"
        aria-checked={on}
        aria-label="Available for new offers"
        disabled={m.isPending}
        onClick={() => m.mutate(!available)}
        className={`relative inline-flex h-11 w-20 shrink-0 items-center rounded-full border transition ${on ? "border-verdigris-600 bg-verdigris-500" : "border-ink-300 bg-ink-200"}`}
      >
        <span
          className={`inline-block h-9 w-9 rounded-full bg-white shadow transition ${on ? "translate-x-10" : "translate-x-1"}`}
        />
      </button>
      <span className="font-semibold text-ink-900">
        {on ? "Available — new cases are offered to you" : "Away — no new offers"}
      </span>
      {m.error ? (
        <span role="alert" className="text-sm font-semibold text-alarm-600">
          {m.error.message}
        </span>
      ) : null}
    </div>
  );
}

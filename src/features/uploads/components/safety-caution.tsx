/** The caution shown wherever the product talks about connecting to the ignition secondary. */
export const SECONDARY_CAUTION =
  "Secondary ignition is tens of kilovolts: switch the ignition off before placing or moving a pickup, keep hands, leads and the scope clear of coils and plug wires while the engine runs, and never pierce a secondary lead. Follow the vehicle maker's procedure, local codes and licensed practice.";

export function SafetyCaution({ compact = false }: { compact?: boolean }) {
  return (
    <div
      role="note"
      aria-label="Safety caution"
      className="flex gap-3 rounded-lg border-l-4 border-alarm-500 bg-alarm-500/5 px-3 py-2 text-sm text-ink-800"
    >
      <span
        aria-hidden="true"
        className="mt-0.5 flex h-6 w-6 flex-none items-center justify-center rounded-full bg-alarm-500 text-xs font-bold text-white"
      >
        !
      </span>
      <p>
        <span className="font-bold text-alarm-600">Safety. </span>
        {compact
          ? "Secondary ignition is tens of kilovolts. Follow the vehicle maker's procedure, local codes and licensed practice."
          : SECONDARY_CAUTION}
      </p>
    </div>
  );
}

import type { CursorReadout as Readout } from "../lib/readout";

function Read({ k, v, strong }: { k: string; v: string; strong?: boolean }) {
  return (
    <div className="flex gap-2">
      <dt className="text-ink-500">{k}</dt>
      <dd className={strong ? "font-semibold text-ink-900" : "text-ink-800"}>{v}</dd>
    </div>
  );
}

/** The cursors' readout: both times, Δt and 1/Δt; both levels and their difference in the channel's unit. */
export function CursorReadout({ readout }: { readout: Readout }) {
  return (
    <dl
      className="mt-2 grid grid-cols-2 gap-x-4 gap-y-1 rounded-lg bg-ink-50 p-2 text-sm tabular-nums @xl:grid-cols-4"
      aria-label="Cursor readout"
    >
      <Read k="1" v={readout.text.ta} />
      <Read k="2" v={readout.text.tb} />
      <Read k="Δt" v={readout.text.dt} strong />
      <Read k="1/Δt" v={readout.text.freq} strong />
      <Read k="A" v={readout.text.va} />
      <Read k="B" v={readout.text.vb} />
      <Read k={readout.dvLabel} v={readout.text.dv} strong />
    </dl>
  );
}

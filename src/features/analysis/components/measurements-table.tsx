import { useId, useState } from "react";
import type { AnalysisResult, CompressionSummary, MetricStats } from "../../../../shared/analysis/types";
import { fmtHz, fmtNum, fmtSeconds, fmtWithUnit } from "../lib/format";
import { metricsByKind, physicalMetric, type MetricDef } from "../lib/metrics";
import type { ChannelUnits } from "../../../lib/physical-units";

const th = "px-2 py-2 text-left font-semibold text-ink-600 sm:px-3";
const td = "px-2 py-2 tabular-nums sm:px-3";

function statsOf(summary: unknown, key: string): MetricStats | null {
  const v = (summary as Record<string, unknown>)[key];
  if (v && typeof v === "object" && "median" in v) return v as MetricStats;
  return null;
}

function fmtMetric(x: number | null | undefined, unit: string, integer?: boolean): string {
  if (unit === "Hz") return fmtHz(x);
  return fmtWithUnit(integer && typeof x === "number" ? Math.round(x * 10) / 10 : x, unit);
}

/** The headline numbers of a result: events, rpm and what its kind adds. */
function Headline({ r, cu }: { r: AnalysisResult; cu?: ChannelUnits | null }) {
  const items: [string, string][] = [];
  const phys = (x: number | null | undefined) => {
    const m = physicalMetric(x, "$", r.unit, cu);
    return fmtWithUnit(m.value, m.unit);
  };
  switch (r.kind) {
    case "secondary-ignition":
      items.push(
        ["Firing events", fmtNum(r.summary.eventCount)],
        ["Engine speed", r.summary.rpm ? `${fmtNum(r.summary.rpm)} rpm` : "—"],
      );
      items.push(["Polarity", r.summary.polarity === "negative" ? "Inverted (measured as magnitudes)" : "Positive"]);
      items.push(["Noise on the baseline", phys(r.summary.noise)]);
      break;
    case "relative-compression":
      items.push(
        ["Compression strokes", fmtNum(r.summary.eventCount)],
        ["Cranking speed", r.summary.rpm ? `${fmtNum(r.summary.rpm)} rpm` : "—"],
      );
      items.push(
        ["Cylinders", fmtNum(r.summary.cylinders)],
        ["Inrush spike", r.summary.inrushIgnored ? "Ignored" : "Not seen"],
      );
      break;
    case "injector":
      items.push(
        ["Pulses", fmtNum(r.summary.eventCount)],
        ["Engine speed", r.summary.rpm ? `${fmtNum(r.summary.rpm)} rpm` : "—"],
      );
      items.push(
        ["Supply", fmtWithUnit(r.summary.supplyV, "V")],
        ["Driver clamp", r.summary.clamped ? "Clamped" : "Not clamped"],
      );
      break;
    case "crank":
      items.push(
        ["Revolutions (gaps)", fmtNum(r.summary.eventCount)],
        ["Engine speed", r.summary.rpm ? `${fmtNum(r.summary.rpm)} rpm` : "—"],
      );
      items.push(["Teeth counted", fmtNum(r.summary.toothCount)]);
      items.push(["Amplitude per 1000 rpm", phys(r.summary.amplitudePerKrpm)]);
      if (r.summary.damagedTeeth.length) items.push(["Suspect teeth", r.summary.damagedTeeth.join(", ")]);
      break;
    case "generic":
      items.push(
        ["Frequency", fmtHz(r.measurements.frequencyHz)],
        ["Duty cycle", r.measurements.dutyCyclePct === null ? "—" : `${fmtNum(r.measurements.dutyCyclePct)} %`],
      );
      break;
  }
  return (
    <dl className="grid grid-cols-2 gap-2 sm:grid-cols-4">
      {items.map(([k, v]) => (
        <div key={k} className="rounded-lg bg-ink-50 px-3 py-2">
          <dt className="text-xs text-ink-500">{k}</dt>
          <dd className="font-semibold tabular-nums text-ink-900">{v}</dd>
        </div>
      ))}
    </dl>
  );
}

type Cell = (x: number | null | undefined, defUnit: string, integer?: boolean) => string;
type Row = { d: MetricDef; s: MetricStats | null };

/** Median, min and max of each per-event metric. */
function StatsTable({ rows, cell, traceName }: { rows: Row[]; cell: Cell; traceName: string }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-200">
      <table className="w-full text-sm">
        <caption className="sr-only">Measurements of {traceName}</caption>
        <thead className="bg-ink-50">
          <tr>
            <th scope="col" className={th}>
              Measurement
            </th>
            <th scope="col" className={`${th} text-right`}>
              Median
            </th>
            <th scope="col" className={`${th} text-right`}>
              Min
            </th>
            <th scope="col" className={`${th} text-right`}>
              Max
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {rows.map(({ d, s }) => (
            <tr key={d.key}>
              <th scope="row" className={`${td} text-left font-semibold text-ink-800`}>
                {d.label}
              </th>
              <td className={`${td} text-right font-semibold`}>{cell(s!.median, d.unit, d.integer)}</td>
              <td className={`${td} text-right text-ink-600`}>{cell(s!.min, d.unit, d.integer)}</td>
              <td className={`${td} text-right text-ink-600`}>{cell(s!.max, d.unit, d.integer)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Relative compression by position in the firing sequence (the bar chart shows the same). */
function PositionsTable({ summary }: { summary: Pick<CompressionSummary, "positions" | "lowPositions"> }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-200">
      <table className="w-full text-sm">
        <caption className="px-3 pt-2 text-left text-sm font-semibold text-ink-700">
          Compression by position in the firing sequence
        </caption>
        <thead className="bg-ink-50">
          <tr>
            <th scope="col" className={th}>
              Position
            </th>
            <th scope="col" className={`${th} text-right`}>
              % of the highest
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {summary.positions.map((p) => {
            const low = summary.lowPositions.includes(p.position);
            return (
              <tr key={p.position} className={low ? "bg-alarm-500/10" : undefined}>
                <th scope="row" className={`${td} text-left`}>
                  {p.position}
                  {low ? <span className="ml-2 text-xs font-bold text-alarm-600">LOW</span> : null}
                </th>
                <td className={`${td} text-right font-semibold`}>{fmtNum(p.relativePct)} %</td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}

/** Every event with its metrics. */
function EventsTable({
  id,
  analysis,
  eventDefs,
  cell,
  traceName,
}: {
  id: string;
  analysis: AnalysisResult;
  eventDefs: MetricDef[];
  cell: Cell;
  traceName: string;
}) {
  return (
    <div id={id} className="max-h-80 overflow-auto rounded-lg border border-ink-200">
      <table className="w-full min-w-[32rem] text-sm">
        <caption className="sr-only">Each event of {traceName}</caption>
        <thead className="sticky top-0 bg-ink-50">
          <tr>
            <th scope="col" className={th}>
              #
            </th>
            <th scope="col" className={`${th} text-right`}>
              Time
            </th>
            {eventDefs.map((d) => (
              <th key={d.key} scope="col" className={`${th} text-right`}>
                {d.label}
              </th>
            ))}
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-100">
          {(analysis.events as unknown as Record<string, number | null>[]).map((e, i) => (
            <tr key={i}>
              <td className={td}>{i + 1}</td>
              <td className={`${td} text-right`}>{fmtSeconds(e.timeS)}</td>
              {eventDefs.map((d) => (
                <td key={d.key} className={`${td} text-right`}>
                  {cell(e[d.eventKey!], d.unit, d.integer)}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Measurements over the whole channel (levels in the channel's physical unit). */
function WholeChannelTable({
  id,
  m,
  level,
  traceName,
}: {
  id: string;
  m: NonNullable<AnalysisResult["measurements"]>;
  level: (x: number | null | undefined) => string;
  traceName: string;
}) {
  const rows: [string, string][] = [
    ["Minimum", level(m.min)],
    ["Maximum", level(m.max)],
    ["Peak to peak", level(m.peakToPeak)],
    ["Mean", level(m.mean)],
    ["RMS", level(m.rms)],
    ["Base / top level", `${level(m.baseLevel)} / ${level(m.topLevel)}`],
    ["Frequency", fmtHz(m.frequencyHz)],
    ["Period", fmtSeconds(m.periodS)],
    ["Duty cycle", m.dutyCyclePct === null ? "—" : `${fmtNum(m.dutyCyclePct)} %`],
    ["Rise time (10–90 %)", fmtSeconds(m.riseTimeS)],
    ["Fall time (90–10 %)", fmtSeconds(m.fallTimeS)],
  ];
  return (
    <div id={id} className="overflow-x-auto rounded-lg border border-ink-200">
      <table className="w-full text-sm">
        <caption className="sr-only">Whole-channel measurements of {traceName}</caption>
        <tbody className="divide-y divide-ink-100">
          {rows.map(([k, v]) => (
            <tr key={k}>
              <th scope="row" className={`${td} text-left font-semibold text-ink-800`}>
                {k}
              </th>
              <td className={`${td} text-right`}>{v}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

const toggleClass =
  "min-h-11 rounded-lg border border-ink-300 bg-white px-3 text-sm font-semibold text-ink-800 hover:bg-ink-50";

/**
 * The measurements of one trace: headline numbers, median / min / max of each per-event metric,
 * the whole-channel measurements and, on request, every event.
 */
export function MeasurementsTable({
  analysis,
  traceName,
  units,
}: {
  analysis: AnalysisResult;
  traceName: string;
  units?: ChannelUnits | null;
}) {
  const defs = metricsByKind[analysis.kind] ?? [];
  const [showEvents, setShowEvents] = useState(false);
  const [showGeneric, setShowGeneric] = useState(analysis.kind === "generic");
  const eventsId = useId();
  const genericId = useId();
  const rows = defs.map((d) => ({ d, s: statsOf(analysis.summary, d.key) })).filter((x) => x.s && x.s.median !== null);
  /** a metric's value and unit as every view shows them (the channel's physical unit) */
  const cell: Cell = (x, defUnit, integer) => {
    const m = physicalMetric(x, defUnit, analysis.unit, units);
    return fmtMetric(m.value, m.unit, integer);
  };
  const eventDefs = defs.filter((d) => d.eventKey);
  const m = analysis.measurements;

  return (
    <div className="space-y-3">
      <Headline r={analysis} cu={units} />
      {rows.length ? (
        <StatsTable rows={rows} cell={cell} traceName={traceName} />
      ) : analysis.kind !== "generic" ? (
        <p className="text-sm text-ink-600">No events were measured in this trace.</p>
      ) : null}
      {analysis.kind === "relative-compression" && analysis.summary.positions.length ? (
        <PositionsTable summary={analysis.summary} />
      ) : null}
      <div className="flex flex-wrap gap-2">
        {eventDefs.length && analysis.events.length ? (
          <button
            type="button"
            className={toggleClass}
            aria-expanded={showEvents}
            aria-controls={eventsId}
            onClick={() => setShowEvents((v) => !v)}
          >
            {showEvents ? "Hide" : "Show"} each event ({analysis.events.length})
          </button>
        ) : null}
        {analysis.kind !== "generic" ? (
          <button
            type="button"
            className={toggleClass}
            aria-expanded={showGeneric}
            aria-controls={genericId}
            onClick={() => setShowGeneric((v) => !v)}
          >
            {showGeneric ? "Hide" : "Show"} whole-channel measurements
          </button>
        ) : null}
      </div>
      {showEvents ? (
        <EventsTable id={eventsId} analysis={analysis} eventDefs={eventDefs} cell={cell} traceName={traceName} />
      ) : null}
      {showGeneric && m ? (
        <WholeChannelTable id={genericId} m={m} level={(x) => cell(x, "$")} traceName={traceName} />
      ) : null}
    </div>
  );
}

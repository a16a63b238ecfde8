import { useId, useState, type FormEvent } from "react";
import { traceKinds } from "../../../../shared/schemas/capture-settings";
import { dataRequestSchema, type DataRequest } from "../../../../shared/schemas/realtime";
import { captureName } from "../lib/describe-request";

const field =
  "block min-h-11 w-full rounded-lg border border-ink-300 bg-white px-3 py-2 text-base text-ink-900 focus:border-kiln-500 focus:outline-none focus:ring-2 focus:ring-kiln-300";
const TIME_UNITS = { ms: 1e-3, µs: 1e-6, s: 1 } as const;

const num = (s: string) => (s.trim() === "" ? undefined : Number(s.replace(",", ".")));

type TimeUnit = keyof typeof TIME_UNITS;

/** The form's text as typed. */
interface RequestFields {
  capture: DataRequest["capture"];
  cylinder: string;
  vdiv: string;
  tdiv: string;
  tunit: TimeUnit;
  trig: string;
  slope: "" | "rising" | "falling";
  conditions: string;
}

/** The request from the form's text: empty boxes are left out, the time/division is in seconds. */
function parseRequest(f: RequestFields) {
  const t = num(f.tdiv);
  const settings = {
    ...(num(f.vdiv) !== undefined ? { voltsPerDiv: num(f.vdiv) } : {}),
    ...(t !== undefined ? { timePerDivS: t * TIME_UNITS[f.tunit] } : {}),
    ...(num(f.trig) !== undefined ? { triggerLevel: num(f.trig) } : {}),
    ...(f.slope ? { triggerSlope: f.slope } : {}),
  };
  return dataRequestSchema.safeParse({
    capture: f.capture,
    ...(num(f.cylinder) !== undefined ? { cylinder: num(f.cylinder) } : {}),
    ...(Object.keys(settings).length ? { settings } : {}),
    ...(f.conditions.trim() ? { conditions: f.conditions.trim() } : {}),
  });
}

/** The time per division: a number and its unit. */
function TimePerDivField({
  id,
  value,
  onValue,
  unit,
  onUnit,
}: {
  id: string;
  value: string;
  onValue: (v: string) => void;
  unit: TimeUnit;
  onUnit: (u: TimeUnit) => void;
}) {
  return (
    <div className="text-sm font-semibold text-ink-700">
      <label htmlFor={id}>Time/division</label>
      <div className="flex gap-2">
        <input
          id={id}
          className={field}
          inputMode="decimal"
          placeholder="e.g. 2"
          value={value}
          onChange={(e) => onValue(e.target.value)}
        />
        <select
          aria-label="Time unit"
          className={`${field} w-24`}
          value={unit}
          onChange={(e) => onUnit(e.target.value as TimeUnit)}
        >
          {Object.keys(TIME_UNITS).map((u) => (
            <option key={u}>{u}</option>
          ))}
        </select>
      </div>
    </div>
  );
}

/** The expert's request for more data: which capture, on which cylinder, with which scope settings. */
export function DataRequestForm({
  onSubmit,
  onCancel,
  busy,
}: {
  onSubmit: (r: DataRequest, text: string) => void;
  onCancel: () => void;
  busy?: boolean;
}) {
  const id = useId();
  const [capture, setCapture] = useState<DataRequest["capture"]>("secondary-ignition");
  const [cylinder, setCylinder] = useState("");
  const [vdiv, setVdiv] = useState("");
  const [tdiv, setTdiv] = useState("");
  const [tunit, setTunit] = useState<TimeUnit>("ms");
  const [trig, setTrig] = useState("");
  const [slope, setSlope] = useState<RequestFields["slope"]>("");
  const [conditions, setConditions] = useState("");
  const [text, setText] = useState("");
  const [error, setError] = useState<string | null>(null);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const parsed = parseRequest({ capture, cylinder, vdiv, tdiv, tunit, trig, slope, conditions });
    if (!parsed.success) {
      const i = parsed.error.issues[0];
      setError(`${i.path.join(".") || "request"}: ${i.message}`);
      return;
    }
    setError(null);
    onSubmit(parsed.data, text.trim());
  };

  return (
    <form
      onSubmit={submit}
      className="space-y-3 rounded-lg border border-kiln-300 bg-white p-3"
      aria-label="Ask for more data"
    >
      <p className="font-bold text-ink-900">Ask for another capture</p>
      <div className="grid gap-3 sm:grid-cols-2">
        <label className="block text-sm font-semibold text-ink-700">
          Capture
          <select
            className={field}
            value={capture}
            onChange={(e) => setCapture(e.target.value as DataRequest["capture"])}
          >
            {traceKinds.map((k) => (
              <option key={k} value={k}>
                {captureName(k)}
              </option>
            ))}
          </select>
        </label>
        <label className="block text-sm font-semibold text-ink-700">
          Cylinder
          <input
            className={field}
            inputMode="numeric"
            placeholder="e.g. 4"
            value={cylinder}
            onChange={(e) => setCylinder(e.target.value)}
          />
        </label>
        <label className="block text-sm font-semibold text-ink-700">
          Volts/division (V)
          <input
            className={field}
            inputMode="decimal"
            placeholder="e.g. 5"
            value={vdiv}
            onChange={(e) => setVdiv(e.target.value)}
          />
        </label>
        <TimePerDivField id={`${id}-t`} value={tdiv} onValue={setTdiv} unit={tunit} onUnit={setTunit} />
        <label className="block text-sm font-semibold text-ink-700">
          Trigger level (V)
          <input
            className={field}
            inputMode="decimal"
            placeholder="optional"
            value={trig}
            onChange={(e) => setTrig(e.target.value)}
          />
        </label>
        <label className="block text-sm font-semibold text-ink-700">
          Trigger slope
          <select className={field} value={slope} onChange={(e) => setSlope(e.target.value as typeof slope)}>
            <option value="">any</option>
            <option value="rising">rising</option>
            <option value="falling">falling</option>
          </select>
        </label>
      </div>
      <label className="block text-sm font-semibold text-ink-700">
        Engine conditions
        <input
          className={field}
          placeholder="e.g. warm, 2500 rpm, then snap throttle"
          value={conditions}
          onChange={(e) => setConditions(e.target.value)}
        />
      </label>
      <label className="block text-sm font-semibold text-ink-700">
        Message
        <textarea
          className={`${field} min-h-20`}
          placeholder="What you want to see and why"
          value={text}
          onChange={(e) => setText(e.target.value)}
        />
      </label>
      {error ? (
        <p role="alert" className="text-sm font-semibold text-alarm-600">
          Check {error}
        </p>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <button
          type="submit"
          disabled={busy}
          className="inline-flex min-h-11 items-center rounded-lg bg-kiln-500 px-4 font-semibold text-ink-950 hover:bg-kiln-400 disabled:opacity-50"
        >
          Send the request
        </button>
        <button
          type="button"
          onClick={onCancel}
          className="inline-flex min-h-11 items-center rounded-lg px-3 font-semibold text-ink-700 hover:bg-ink-100"
        >
          Cancel
        </button>
      </div>
    </form>
  );
}

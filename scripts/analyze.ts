/**
 * `npm run -s analyze -- FILE... [--kind K] [--probe P] [--kv-per-volt N] [--mv-per-amp N] [--waste-spark]
 *   [--every-cylinder] [--volts-per-div V] [--time-per-div S] [--trigger-level V] [--ground-offset DIV]
 *   [--sample-rate HZ] [--cylinders N] [--cylinder N] --json`
 *
 * Analyses scope exports (CSV/TSV) and prints JSON on stdout (a public contract):
 * - one file: { file, kind, unit, trace: { samples, sampleRateHz, durationS, channels, warnings }, events,
 *   summary, findings, … } — the object analyzeTrace returns, with `file` and `trace` in front;
 * - several files: { traces: [ one object per file ], comparison: { metrics, outliers } }.
 * --kind defaults to secondary-ignition. Output is always JSON (--json is accepted for clarity).
 * Units follow shared/trace/units.ts: --volts-per-div, --trigger-level and --ground-offset are in the
 * scope's unit (volts, or kV / A when the file states them); results are in the physical unit (kV at
 * the plug with --kv-per-volt, amperes with --mv-per-amp, or the file's own kV or A).
 * A binary file (image, archive, PDF…) is refused by name, with the check the upload uses.
 * Exit codes: 0 done; 2 a file could not be read or parsed (one line on stderr naming the file,
 * the line and the reason) or the command line is wrong; 1 anything else.
 */
import fs from "node:fs";
import { analyzeTrace } from "../shared/analysis/analyze";
import { compareTraces } from "../shared/analysis/compare";
import {
  probeKinds,
  traceKinds,
  type CaptureSettings,
  type ProbeKind,
  type TraceKind,
} from "../shared/schemas/capture-settings";
import { createTraceAccumulator } from "../shared/trace/parse";
import { TraceParseError, type ParsedTrace } from "../shared/trace/types";
import { checkTextStart, TEXT_SNIFF_BYTES } from "../server/uploads/magic";

const USAGE =
  "usage: npm run -s analyze -- FILE... [--kind secondary-ignition|relative-compression|injector|crank|generic] " +
  "[--probe capacitive-secondary|direct|x10|current-clamp] [--kv-per-volt N] [--mv-per-amp N] [--waste-spark] " +
  "[--every-cylinder] " +
  "[--volts-per-div V] [--time-per-div S] [--trigger-level V] [--ground-offset DIV] [--sample-rate HZ] " +
  "[--cylinders N] [--cylinder N] --json";

class UsageError extends Error {}
class FileError extends Error {}

interface Args {
  files: string[];
  kind: TraceKind;
  settings: Partial<CaptureSettings>;
  kvPerVolt?: number;
  wasteSpark: boolean;
  everyCylinder: boolean;
  sampleRateHz?: number;
  cylinders?: number;
}

function parseArgs(argv: string[]): Args {
  const files: string[] = [];
  const settings: Partial<CaptureSettings> = {};
  let kind: TraceKind = "secondary-ignition";
  let kvPerVolt: number | undefined;
  let wasteSpark = false;
  let everyCylinder = false;
  let sampleRateHz: number | undefined;
  let cylinders: number | undefined;
  const num = (flag: string, value: string | undefined, opts: { positive?: boolean; integer?: boolean } = {}) => {
    if (value === undefined) throw new UsageError(`${flag} needs a value`);
    const x = Number(value);
    if (value.trim() === "" || !Number.isFinite(x)) throw new UsageError(`${flag} needs a number, not "${value}"`);
    if (opts.positive && !(x > 0)) throw new UsageError(`${flag} must be greater than 0`);
    if (opts.integer && !Number.isInteger(x)) throw new UsageError(`${flag} must be a whole number`);
    return x;
  };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const [flag, inline] =
      a.startsWith("--") && a.includes("=")
        ? [a.slice(0, a.indexOf("=")), a.slice(a.indexOf("=") + 1)]
        : [a, undefined];
    const value = () => (inline !== undefined ? inline : argv[++i]);
    switch (flag) {
      case "--json":
        break;
      case "--kind": {
        const k = value();
        if (!(traceKinds as readonly string[]).includes(k ?? ""))
          throw new UsageError(`--kind must be one of ${traceKinds.join(", ")}`);
        kind = k as TraceKind;
        break;
      }
      case "--kv-per-volt":
        kvPerVolt = num(flag, value(), { positive: true });
        break;
      case "--mv-per-amp":
        settings.mvPerAmp = num(flag, value(), { positive: true });
        break;
      case "--probe": {
        const p = value();
        if (!(probeKinds as readonly string[]).includes(p ?? ""))
          throw new UsageError(`--probe must be one of ` + `${probeKinds.join(", ")}`);
        settings.probe = p as ProbeKind;
        break;
      }
      case "--ground-offset":
        settings.groundOffsetDiv = num(flag, value());
        if (Math.abs(settings.groundOffsetDiv) > 4)
          throw new UsageError("--ground-offset must be between -4 and " + "4 divisions");
        break;
      case "--cylinder":
        settings.cylinder = num(flag, value(), { positive: true, integer: true });
        break;
      case "--waste-spark":
        wasteSpark = true;
        break;
      case "--every-cylinder":
        everyCylinder = true;
        break;
      case "--volts-per-div":
        settings.voltsPerDiv = num(flag, value(), { positive: true });
        break;
      case "--time-per-div":
        settings.timePerDivS = num(flag, value(), { positive: true });
        break;
      case "--trigger-level":
        settings.triggerLevel = num(flag, value());
        break;
      case "--sample-rate":
        sampleRateHz = num(flag, value(), { positive: true });
        break;
      case "--cylinders":
        cylinders = num(flag, value(), { positive: true, integer: true });
        break;
      case "-h":
      case "--help":
        process.stdout.write(`${USAGE}\n`);
        answered = true;
        process.exit(0);
        break;
      default:
        if (a.startsWith("-") && a !== "-") throw new UsageError(`unknown option ${a}`);
        files.push(a);
    }
  }
  if (files.length === 0) throw new UsageError("no files given");
  if (wasteSpark && everyCylinder) {
    throw new UsageError("--waste-spark and --every-cylinder exclude each other (a distributor has no waste spark)");
  }
  return { files, kind, settings, kvPerVolt, wasteSpark, everyCylinder, sampleRateHz, cylinders };
}

const FS_REASONS: Record<string, string> = {
  ENOENT: "no such file",
  EISDIR: "is a directory, not a file",
  EACCES: "permission denied",
  EPERM: "permission denied",
};

/** Streams a file through the trace parser (no whole-file string in memory). */
async function readTrace(file: string, sampleRateHz?: number): Promise<ParsedTrace> {
  let size: number | undefined;
  try {
    const st = fs.statSync(file);
    if (st.isDirectory()) throw Object.assign(new Error("directory"), { code: "EISDIR" });
    size = st.size;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? "";
    throw new FileError(`${file}: cannot read the file: ${FS_REASONS[code] ?? (e as Error).message}`);
  }
  // the upload's own check: a binary container is refused by what it is, not parsed as text
  const head = Buffer.alloc(Math.min(size ?? 0, TEXT_SNIFF_BYTES));
  if (head.length) {
    const fd = fs.openSync(file, "r");
    try {
      fs.readSync(fd, head, 0, head.length, 0);
    } finally {
      fs.closeSync(fd);
    }
  }
  const text = checkTextStart(head);
  if (!text.ok) throw new FileError(`${file}: ${text.reason}`);
  const acc = createTraceAccumulator({ sampleRateHz, totalChars: size });
  try {
    const stream = fs.createReadStream(file, { encoding: "utf8", highWaterMark: 1 << 20 });
    for await (const chunk of stream) acc.pushText(chunk as string);
    return acc.finish();
  } catch (e) {
    if (e instanceof TraceParseError) {
      const reason = e.line != null ? e.message.replace(/^line \d+: /, "") : e.message;
      throw new FileError(e.line != null ? `${file}: line ${e.line}: ${reason}` : `${file}: ${reason}`);
    }
    const code = (e as NodeJS.ErrnoException).code ?? "";
    if (code) throw new FileError(`${file}: cannot read the file: ${FS_REASONS[code] ?? (e as Error).message}`);
    throw e;
  }
}

async function main(): Promise<number> {
  let args: Args;
  try {
    args = parseArgs(process.argv.slice(2));
  } catch (e) {
    if (e instanceof UsageError) {
      process.stderr.write(`analyze: ${e.message}\n${USAGE}\n`);
      answered = true;
      return 2;
    }
    throw e;
  }
  const settings: Partial<CaptureSettings> = {
    ...args.settings,
    kind: args.kind,
    wasteSpark: args.wasteSpark,
    everyCylinder: args.everyCylinder,
  };
  if (args.kvPerVolt) settings.kvPerVolt = args.kvPerVolt;
  if (args.cylinders) settings.cylinders = args.cylinders;
  const out: Record<string, unknown>[] = [];
  for (const file of args.files) {
    let trace: ParsedTrace;
    try {
      trace = await readTrace(file, args.sampleRateHz);
    } catch (e) {
      if (e instanceof FileError) {
        process.stderr.write(`analyze: ${e.message.replace(/\s*\n\s*/g, " ")}\n`);
        answered = true;
        return 2;
      }
      throw e;
    }
    const result = analyzeTrace(trace, settings, {
      kind: args.kind,
      kvPerVolt: args.kvPerVolt,
      wasteSpark: args.wasteSpark,
      everyCylinder: args.everyCylinder,
      cylinders: args.cylinders,
    });
    const { kind, unit, ...rest } = result;
    out.push({
      file,
      kind,
      unit,
      trace: {
        samples: trace.samples,
        sampleRateHz: trace.sampleRateHz,
        durationS: trace.durationS,
        channels: trace.channels.map((c) => ({ name: c.name, unit: c.unit, min: c.min, max: c.max })),
        warnings: trace.warnings,
      },
      ...rest,
    });
  }
  const doc =
    out.length === 1
      ? out[0]
      : { traces: out, comparison: compareTraces(out as unknown as Parameters<typeof compareTraces>[0]) };
  process.stdout.write(`${JSON.stringify(doc, null, 2)}\n`);
  return 0;
}

/**
 * Every way out says why on stderr, in one line: an error thrown anywhere (also outside main's chain,
 * as an uncaught exception or an unhandled rejection), a signal, and an exit before main has answered
 * (the event loop ran dry with the work unfinished, or something called process.exit) — that last one
 * is never a success.
 */
let answered = false;
const fail = (why: string, code = 1) => {
  if (!answered) process.stderr.write(`analyze: ${why.replace(/\s*\n\s*/g, " ")}\n`);
  answered = true;
  process.exitCode = code;
};
const errorText = (e: unknown) => (e instanceof Error ? e.message : String(e));
process.on("uncaughtException", (e) => {
  fail(`internal error: ${errorText(e)}`);
  process.exit(1);
});
process.on("unhandledRejection", (e) => {
  fail(`internal error: ${errorText(e)}`);
  process.exit(1);
});
for (const [sig, n] of [
  ["SIGINT", 2],
  ["SIGTERM", 15],
  ["SIGHUP", 1],
] as const) {
  process.on(sig, () => {
    fail(`stopped by ${sig} before finishing`, 128 + n);
    process.exit(128 + n);
  });
}
process.stdout.on("error", (e) => {
  fail(`cannot write the output: ${errorText(e)}`);
  process.exit(1);
});
process.on("exit", (code) => {
  if (answered) return;
  fail(`stopped before finishing (exit code ${code || 1}), with no result written`);
  if (!code) process.exitCode = 1;
});

main().then(
  (code) => {
    answered = true;
    process.exitCode = code;
  },
  (e: unknown) => fail(`internal error: ${errorText(e)}`),
);

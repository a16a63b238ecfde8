import { screenVoltageRange, type CaptureSettings, type TraceKind } from "../schemas/capture-settings";
import type { ParsedTrace } from "../trace/types";
import { analyzeCompression } from "./compression";
import { analyzeCrank } from "./crank";
import { analyzeGeneric } from "./generic";
import { analyzeInjector } from "./injector";
import { measurePrepared } from "./measure";
import { analyzeSecondary } from "./secondary";
import { prepare, unitFactor } from "./signal";
import type { AnalysisResult, AnalyzeOptions, SignalInput } from "./types";

export type AnalyzableTrace = ParsedTrace | SignalInput;

function isParsed(t: AnalyzableTrace): t is ParsedTrace {
  return Array.isArray((t as ParsedTrace).channels);
}

/** The channel to analyse as a SignalInput. */
export function channelInput(trace: AnalyzableTrace, channel: number | string = 0): SignalInput {
  if (!isParsed(trace)) return trace;
  const idx =
    typeof channel === "number"
      ? channel
      : Math.max(
          0,
          trace.channels.findIndex((c) => c.name === channel),
        );
  const ch = trace.channels[idx];
  if (!ch) throw new RangeError(`the trace has no channel ${channel}`);
  return {
    values: ch.values,
    sampleRateHz: trace.sampleRateHz,
    t0: trace.t0,
    time: trace.time,
    unit: ch.unit,
    name: ch.name,
  };
}

/** Screen range in the channel's raw units, from volts/division and the ground offset. */
function screenRaw(toBase: number, settings: Partial<CaptureSettings>): { min: number; max: number } | null {
  if (!(settings.voltsPerDiv && settings.voltsPerDiv > 0)) return null;
  const r = screenVoltageRange({ voltsPerDiv: settings.voltsPerDiv, groundOffsetDiv: settings.groundOffsetDiv ?? 0 });
  return { min: r.min / toBase, max: r.max / toBase };
}

const TIME_KEY = /S$/;

/** Rounds every number in a result for storage and display: 6 significant digits, times 9. */
function tidy<T>(x: T, key = ""): T {
  if (typeof x === "number") {
    if (!Number.isFinite(x)) return null as T;
    if (Number.isInteger(x)) return x;
    return Number(x.toPrecision(TIME_KEY.test(key) ? 9 : 6)) as T;
  }
  if (Array.isArray(x)) return x.map((v) => tidy(v, key)) as T;
  if (x && typeof x === "object") {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(x)) out[k] = tidy(v, k);
    return out as T;
  }
  return x;
}

/**
 * Analyses one channel of a capture: the measurements of its kind, the capture review and
 * suggestions. The result is plain JSON (numbers rounded), the same object the CLI prints per file
 * without its `file` and `trace` header, so the server can store it at upload and the client can
 * render it.
 */
export function analyzeTrace(
  trace: AnalyzableTrace,
  settings: Partial<CaptureSettings> = {},
  opts: AnalyzeOptions = {},
): AnalysisResult {
  const kind: TraceKind = opts.kind ?? settings.kind ?? "secondary-ignition";
  const input = channelInput(trace, opts.channel ?? 0);
  const screen = screenRaw(unitFactor(input.unit).factor, settings);
  const p = prepare(input, opts.window, screen);
  let result: AnalysisResult;
  switch (kind) {
    case "secondary-ignition": {
      const kvPerVolt = opts.kvPerVolt ?? settings.kvPerVolt;
      const baseIsKv = (input.unit ?? "").trim().toLowerCase() === "kv";
      const unit = kvPerVolt || baseIsKv ? "kV" : p.baseUnit;
      // raw → volts at the pickup → kV at the plug
      const scale = kvPerVolt ? p.toBase * kvPerVolt : baseIsKv ? 1 : p.toBase;
      const r = analyzeSecondary(p, {
        scale,
        unit,
        settings,
        wasteSpark: opts.wasteSpark ?? settings.wasteSpark ?? false,
        screen,
      });
      result = {
        kind,
        unit,
        events: r.events,
        summary: r.summary,
        findings: r.findings,
        channel: p.name,
        measurements: measurePrepared(p, scale),
        suggestions: r.suggestions,
      };
      break;
    }
    case "relative-compression": {
      const r = analyzeCompression(p, { settings, screen, cylinders: opts.cylinders ?? settings.cylinders });
      result = { kind, channel: p.name, ...r };
      break;
    }
    case "injector": {
      const r = analyzeInjector(p, { settings, screen });
      result = { kind, channel: p.name, ...r };
      break;
    }
    case "crank": {
      const r = analyzeCrank(p, { settings, screen });
      result = { kind, channel: p.name, ...r };
      break;
    }
    default: {
      const r = analyzeGeneric(p, { settings, screen });
      result = { kind: "generic", channel: p.name, ...r };
    }
  }
  // key order: kind, unit, events, summary, findings, then the rest
  const { kind: k, unit, events, summary, findings, ...rest } = result;
  return tidy({ kind: k, unit, events, summary, findings, ...rest }) as AnalysisResult;
}

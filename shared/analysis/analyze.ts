import type { CaptureSettings, TraceKind } from "../schemas/capture-settings";
import type { ParsedTrace } from "../trace/types";
import { channelUnits, type ChannelUnits } from "../trace/units";
import { analyzeCompression } from "./compression";
import { analyzeCrank } from "./crank";
import { analyzeGeneric } from "./generic";
import { analyzeInjector } from "./injector";
import { measurePrepared } from "./measure";
import { screenRange } from "./review";
import { analyzeSecondary } from "./secondary";
import { prepare } from "./signal";
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

/**
 * The channel's unit model for the analysis (shared/trace/units.ts channelUnits) from the file's unit
 * and the settings. When the settings name no probe, a clamp scale alone (mvPerAmp without kvPerVolt)
 * means a current clamp; a kvPerVolt means a capacitive pickup (channelUnits' own rule).
 */
export function analysisUnits(
  fileUnit: string | null | undefined,
  settings: Partial<CaptureSettings>,
  opts: Pick<AnalyzeOptions, "kvPerVolt"> = {},
): ChannelUnits {
  const kvPerVolt = opts.kvPerVolt ?? settings.kvPerVolt;
  const mvPerAmp = settings.mvPerAmp;
  const probe = settings.probe ?? (kvPerVolt == null && mvPerAmp != null ? "current-clamp" : undefined);
  return channelUnits(fileUnit, { probe, kvPerVolt, mvPerAmp });
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
  const units = analysisUnits(input.unit, settings, opts);
  const screen = screenRange(units, settings);
  const p = prepare(input, opts.window, screen, units);
  const common = {
    channel: p.name,
    unit: units.unit,
    scopeUnit: units.scopeUnit,
    unitNote: units.note,
    cylinder: settings.cylinder ?? null,
    coil: settings.coil ?? null,
  };
  let result: AnalysisResult;
  switch (kind) {
    case "secondary-ignition": {
      const r = analyzeSecondary(p, {
        settings,
        wasteSpark: opts.wasteSpark ?? settings.wasteSpark ?? false,
        everyCylinder: opts.everyCylinder ?? settings.everyCylinder ?? false,
        cylinders: opts.cylinders ?? settings.cylinders,
        screen,
      });
      result = { kind, ...common, ...r, measurements: measurePrepared(p, p.toPhysical) };
      break;
    }
    case "relative-compression": {
      const r = analyzeCompression(p, { settings, screen, cylinders: opts.cylinders ?? settings.cylinders });
      result = { kind, ...common, ...r };
      break;
    }
    case "injector": {
      result = { kind, ...common, ...analyzeInjector(p, { settings, screen }) };
      break;
    }
    case "crank": {
      result = { kind, ...common, ...analyzeCrank(p, { settings, screen }) };
      break;
    }
    default: {
      result = { kind: "generic", ...common, ...analyzeGeneric(p, { settings, screen }) };
    }
  }
  // key order: kind, unit, events, summary, findings, then the rest
  const { kind: k, unit, events, summary, findings, ...rest } = result;
  return tidy({ kind: k, unit, events, summary, findings, ...rest }) as AnalysisResult;
}

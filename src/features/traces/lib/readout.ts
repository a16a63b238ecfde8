/** Cursor readouts: Δt, 1/Δt and ΔV with units. Pure. */
import { formatFrequency, formatInUnit, formatTime, probeScale } from "./units";

export interface CursorPositions {
  /** two time cursors, seconds */
  ta: number;
  tb: number;
  /** two level cursors, channel unit */
  va: number;
  vb: number;
}

export interface CursorReadout {
  dt: number;
  /** 1/|Δt| in Hz; null when Δt is 0 */
  freqHz: number | null;
  dv: number;
  /** ΔV in the probe's quantity (kV at the plug, A for a clamp), when the probe has a scale */
  dScaled: number | null;
  text: {
    ta: string;
    tb: string;
    dt: string;
    freq: string;
    va: string;
    vb: string;
    dv: string;
    scaled: string | null;
  };
}

/**
 * Δt = tb − ta, 1/|Δt|, ΔV = vb − va; values are shown with SI prefixes of the channel's unit
 * and, for a kV-per-volt pickup or a current clamp, also in that quantity.
 */
export function cursorReadout(
  c: CursorPositions,
  channelUnit: string | null | undefined,
  settings?: { probe?: string; kvPerVolt?: number; mvPerAmp?: number },
  timeOrigin = 0,
): CursorReadout {
  const dt = c.tb - c.ta;
  const freqHz = dt !== 0 ? 1 / Math.abs(dt) : null;
  const dv = c.vb - c.va;
  const scale = probeScale(settings, channelUnit);
  const dScaled = scale ? dv * scale.factor : null;
  const v = (x: number) => formatInUnit(x, channelUnit);
  return {
    dt,
    freqHz,
    dv,
    dScaled,
    text: {
      ta: formatTime(c.ta - timeOrigin),
      tb: formatTime(c.tb - timeOrigin),
      dt: formatTime(dt),
      freq: freqHz == null ? "—" : formatFrequency(freqHz),
      va: v(c.va),
      vb: v(c.vb),
      dv: v(dv),
      scaled: scale && dScaled != null ? `${formatInUnit(dScaled, scale.unit)} ${scale.label}` : null,
    },
  };
}

/** Default cursor positions: at one and two thirds of the visible window and level range. */
export function defaultCursors(t0: number, t1: number, vMin: number, vMax: number): CursorPositions {
  return {
    ta: t0 + (t1 - t0) / 3,
    tb: t0 + (2 * (t1 - t0)) / 3,
    va: vMin + (vMax - vMin) / 3,
    vb: vMin + (2 * (vMax - vMin)) / 3,
  };
}

/** "0.5 ms/div", "2 V/div" */
export function perDivText(perDiv: number, unit: string | null | undefined, kind: "time" | "level"): string {
  return `${kind === "time" ? formatTime(perDiv) : formatInUnit(perDiv, unit)}/div`;
}

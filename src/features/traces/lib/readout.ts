/** Cursor readouts: Δt, 1/Δt and the level difference in the channel's physical unit. Pure. */
import { deltaLabel, formatFrequency, formatLevel, formatTime, type ChannelUnits } from "../../../lib/trace-units";

export interface CursorPositions {
  /** two time cursors, seconds */
  ta: number;
  tb: number;
  /** two level cursors, in the channel's physical (display) unit */
  va: number;
  vb: number;
}

export interface CursorReadout {
  dt: number;
  /** 1/|Δt| in Hz; null when Δt is 0 */
  freqHz: number | null;
  /** vb − va, physical unit */
  dv: number;
  /** "ΔV" for a voltage, "ΔA" for a current */
  dvLabel: string;
  text: {
    ta: string;
    tb: string;
    dt: string;
    freq: string;
    va: string;
    vb: string;
    dv: string;
  };
}

/**
 * Δt = tb − ta, 1/|Δt|, Δ = vb − va; levels in the unit every view of the trace shows (kV at the
 * plug for a pickup with a kV/V scale or a kV file, amperes through a clamp, else volts).
 */
export function cursorReadout(c: CursorPositions, cu: Pick<ChannelUnits, "unit">, timeOrigin = 0): CursorReadout {
  const dt = c.tb - c.ta;
  const freqHz = dt !== 0 ? 1 / Math.abs(dt) : null;
  const dv = c.vb - c.va;
  const v = (x: number) => formatLevel(x, cu.unit);
  return {
    dt,
    freqHz,
    dv,
    dvLabel: deltaLabel(cu),
    text: {
      ta: formatTime(c.ta - timeOrigin),
      tb: formatTime(c.tb - timeOrigin),
      dt: formatTime(dt),
      freq: freqHz == null ? "—" : formatFrequency(freqHz),
      va: v(c.va),
      vb: v(c.vb),
      dv: v(dv),
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

/** "0.5 ms/div", "2 kV/div", "5 A/div" (levels in the display unit). */
export function perDivText(perDiv: number, unit: string | null | undefined, kind: "time" | "level"): string {
  return `${kind === "time" ? formatTime(perDiv) : formatLevel(perDiv, unit || "V")}/div`;
}

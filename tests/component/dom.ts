/**
 * What jsdom lacks for the viewer and the live layout, stood in for by the component tests: a 2D
 * canvas context that draws nothing (uPlot needs one; the pictures are checked in the browser
 * tests), media queries answered from a chosen screen, a laid-out width for every element, a
 * ResizeObserver that never fires, and a trace window endpoint that decimates a known signal.
 */
import { vi } from "vitest";
import { decimateMinMax } from "../../shared/trace/decimate";

/** A CanvasRenderingContext2D whose every method does nothing and whose text is 6 px per character. */
function canvasContext(canvas: HTMLCanvasElement): CanvasRenderingContext2D {
  const state: Record<string | symbol, unknown> = { canvas };
  return new Proxy(state, {
    get(target, key) {
      if (key in target) return target[key];
      if (key === "measureText") return (t: string) => ({ width: t.length * 6 });
      if (key === "getImageData") return () => ({ data: new Uint8ClampedArray(4) });
      return () => undefined;
    },
    set(target, key, value) {
      target[key] = value;
      return true;
    },
  }) as unknown as CanvasRenderingContext2D;
}

export interface Screen {
  width: number;
  /** a touch screen: (hover: none), (pointer: coarse) */
  touch: boolean;
}

/** Answers a media query from the screen: min-width / max-width in px, hover and pointer. */
export function matches(screen: Screen, query: string): boolean {
  return query.split(",").some((part) => {
    const q = part.trim();
    const min = /min-width:\s*(\d+)px/.exec(q);
    if (min) return screen.width >= Number(min[1]);
    const max = /max-width:\s*(\d+)px/.exec(q);
    if (max) return screen.width <= Number(max[1]);
    if (/hover:\s*none|pointer:\s*coarse/.test(q)) return screen.touch;
    if (/hover:\s*hover|pointer:\s*fine/.test(q)) return !screen.touch;
    return false;
  });
}

function installMatchMedia(screen: Screen): void {
  window.matchMedia = ((query: string) => ({
    matches: matches(screen, query),
    media: query,
    onchange: null,
    addEventListener: () => {},
    removeEventListener: () => {},
    addListener: () => {},
    removeListener: () => {},
    dispatchEvent: () => false,
  })) as typeof window.matchMedia;
}

// uPlot reads the pixel ratio through matchMedia as it loads: a desk screen until a test says otherwise
installMatchMedia({ width: 1280, touch: false });

/** uPlot builds its series paths as Path2D objects (none drawn here: the layers draw the traces). */
class Path2DStub {}
for (const m of [
  "addPath",
  "arc",
  "arcTo",
  "bezierCurveTo",
  "closePath",
  "ellipse",
  "lineTo",
  "moveTo",
  "quadraticCurveTo",
  "rect",
  "roundRect",
]) {
  (Path2DStub.prototype as unknown as Record<string, () => void>)[m] = () => {};
}
if (typeof globalThis.Path2D === "undefined") globalThis.Path2D = Path2DStub as unknown as typeof Path2D;

/** Installs the stand-ins for a screen; every element measures `box` px wide. */
export function installDom(screen: Screen, box = { width: 800, height: 400 }): void {
  vi.spyOn(HTMLCanvasElement.prototype, "getContext").mockImplementation(function (this: HTMLCanvasElement) {
    return canvasContext(this);
  } as never);
  installMatchMedia(screen);
  vi.spyOn(Element.prototype, "getBoundingClientRect").mockImplementation(
    () =>
      ({
        x: 0,
        y: 0,
        left: 0,
        top: 0,
        width: box.width,
        height: box.height,
        right: box.width,
        bottom: box.height,
        toJSON: () => ({}),
      }) as DOMRect,
  );
  globalThis.ResizeObserver = class {
    observe() {}
    unobserve() {}
    disconnect() {}
  } as unknown as typeof ResizeObserver;
  Element.prototype.scrollIntoView = () => {};
}

/**
 * A secondary-ignition-like signal at the pickup (invented for these tests, stated here): 0 V, a
 * firing spike of 8 V from 5.00 to 5.02 ms, a spark line at 1.5 V until 6.5 ms, then 0 V; 20 ms at
 * 100 kS/s.
 */
export const SIGNAL = {
  rateHz: 100_000,
  durationS: 0.02,
  fireS: 0.005,
  spikeEndS: 0.00502,
  sparkEndS: 0.0065,
  spikeV: 8,
  sparkV: 1.5,
};

export function signalAt(t: number): number {
  if (t >= SIGNAL.fireS && t < SIGNAL.spikeEndS) return SIGNAL.spikeV;
  if (t >= SIGNAL.spikeEndS && t < SIGNAL.sparkEndS) return SIGNAL.sparkV;
  return 0;
}

/**
 * The window endpoint over SIGNAL: min/max buckets by the shared decimation (what the server
 * answers); `json` answers other paths (exact path → body); everything else is a 404.
 */
export function installWindowFetch(json: Record<string, unknown> = {}): { urls: string[] } {
  const n = Math.round(SIGNAL.durationS * SIGNAL.rateHz);
  const values = new Float32Array(n);
  for (let i = 0; i < n; i++) values[i] = signalAt(i / SIGNAL.rateHz);
  const src = { samples: n, t0: 0, sampleRateHz: SIGNAL.rateHz, time: null, channels: [{ name: "A", values }] };
  const urls: string[] = [];
  globalThis.fetch = vi.fn(async (input: RequestInfo | URL) => {
    const url = new URL(String(input), "http://localhost");
    urls.push(url.pathname + url.search);
    if (/\/window$/.test(url.pathname)) {
      const w = decimateMinMax(
        src,
        Number(url.searchParams.get("t0")),
        Number(url.searchParams.get("t1")),
        Number(url.searchParams.get("width")),
      );
      return new Response(JSON.stringify(w), { status: 200, headers: { "Content-Type": "application/json" } });
    }
    if (url.pathname in json)
      return new Response(JSON.stringify(json[url.pathname]), {
        status: 200,
        headers: { "Content-Type": "application/json" },
      });
    return new Response(JSON.stringify({ error: { code: "not_found", message: "Not in this test." } }), {
      status: 404,
      headers: { "Content-Type": "application/json" },
    });
  }) as typeof fetch;
  return { urls };
}

/** The trace of SIGNAL as the viewer takes it: volts at the scope, 2 V/div and 2 ms/div. */
export const SIGNAL_TRACE = {
  id: "tr-signal",
  name: "Cylinder 4",
  samples: Math.round(SIGNAL.durationS * SIGNAL.rateHz),
  sampleRateHz: SIGNAL.rateHz,
  durationS: SIGNAL.durationS,
  t0: 0,
  channels: [{ name: "A", unit: "V", min: 0, max: SIGNAL.spikeV }],
  settings: { voltsPerDiv: 2, timePerDivS: 0.002, groundOffsetDiv: -3 },
  analysis: null,
};

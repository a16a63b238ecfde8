// @vitest-environment jsdom
// the DOM stand-ins first: uPlot reads matchMedia as it loads
import { installDom, installWindowFetch, SIGNAL, SIGNAL_TRACE } from "./dom";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { act, cleanup, fireEvent, render, screen, waitFor } from "@testing-library/react";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import type { ReactNode } from "react";
import { TraceViewer } from "../../src/features/traces/components/trace-viewer";
import type { MarkDraft, TraceInfo } from "../../src/features/traces/types";

/**
 * The expert's mark tools in the trace viewer, driven through the plot's own pointer handlers: a
 * tool disarms after one mark (so the next drag zooms), Shift keeps it armed, and a pin snaps to
 * the trace — its level is the signal's value at its time, not the height of the click. The signal
 * (tests/component/dom.ts, stated there): a 1.5 V spark line from 5.02 to 6.5 ms after an 8 V
 * firing spike at 5 ms. The plot measures 800 px (stand-in layout); uPlot's plot area is that less
 * the level axis (60 px) and the right padding (28 px) = 712 px.
 */

const PLOT_W = 800 - 60 - 28;
/** The capture view: 10 divisions of 2 ms; the trigger point (no analysis) is the trace's start. */
const VIEW = { t0: 0, t1: 0.02 };
const xOf = (t: number) => ((t - VIEW.t0) / (VIEW.t1 - VIEW.t0)) * PLOT_W;

function wrap(ui: ReactNode) {
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(<QueryClientProvider client={qc}>{ui}</QueryClientProvider>);
}

async function plotOver(): Promise<HTMLElement> {
  const plot = await screen.findByRole("img");
  await waitFor(() => expect(screen.queryByText("Loading…")).toBeNull());
  return plot.querySelector(".u-over") as HTMLElement;
}

function press(over: HTMLElement, x: number, y: number, opts: { shiftKey?: boolean } = {}) {
  const base = { pointerId: 1, pointerType: "mouse", button: 0, clientX: x, clientY: y, bubbles: true, ...opts };
  fireEvent.pointerDown(over, base);
  fireEvent.pointerUp(over, base);
}

const toolButton = (name: string) => screen.getByRole("button", { name });

beforeEach(() => {
  installDom({ width: 1280, touch: false });
  installWindowFetch();
});

afterEach(() => {
  cleanup();
  vi.restoreAllMocks();
});

describe("mark tools", () => {
  it("disarm after one mark, so the next drag zooms", async () => {
    const created: MarkDraft[] = [];
    wrap(<TraceViewer traces={[SIGNAL_TRACE as TraceInfo]} onCreateMark={(d) => created.push(d)} />);
    const over = await plotOver();
    fireEvent.click(toolButton("Note (n)"));
    expect(toolButton("Note (n)").getAttribute("aria-pressed")).toBe("true");
    press(over, xOf(0.01), 100);
    // the label prompt is open and the tool is down again
    await screen.findByLabelText(/^Note for the new note at 10 ms/);
    expect(toolButton("Note (n)").getAttribute("aria-pressed")).toBe("false");
    fireEvent.change(screen.getByLabelText(/^Note for the new note/), { target: { value: "look here" } });
    fireEvent.click(screen.getByRole("button", { name: "Add note" }));
    expect(created).toHaveLength(1);
    expect(created[0]).toMatchObject({ kind: "note", label: "look here" });
    expect(created[0].t0).toBeCloseTo(0.01, 6);

    // a drag now zooms: the plot's window becomes the dragged range (5 ms to 10 ms), no prompt
    const plot = screen.getByRole("img");
    const e = { pointerId: 2, pointerType: "mouse", button: 0, clientY: 100, bubbles: true };
    fireEvent.pointerDown(over, { ...e, clientX: xOf(0.005) });
    fireEvent.pointerMove(over, { ...e, clientX: xOf(0.01) });
    fireEvent.pointerUp(over, { ...e, clientX: xOf(0.01) });
    await waitFor(() => expect(Number(plot.dataset.windowT0)).toBeCloseTo(0.005, 6));
    expect(Number(plot.dataset.windowT1)).toBeCloseTo(0.01, 6);
    expect(screen.queryByLabelText(/for the new/)).toBeNull();
    expect(created).toHaveLength(1);
  });

  it("stay armed while Shift is held", async () => {
    const created: MarkDraft[] = [];
    wrap(<TraceViewer traces={[SIGNAL_TRACE as TraceInfo]} onCreateMark={(d) => created.push(d)} />);
    const over = await plotOver();
    fireEvent.click(toolButton("Level (l)"));
    press(over, xOf(0.012), 120, { shiftKey: true });
    await screen.findByLabelText(/^Label for the new level/);
    expect(toolButton("Level (l)").getAttribute("aria-pressed")).toBe("true");
    fireEvent.click(screen.getByRole("button", { name: "Add level" }));
    press(over, xOf(0.014), 140, { shiftKey: true });
    await screen.findByLabelText(/^Label for the new level/);
    fireEvent.click(screen.getByRole("button", { name: "Add level" }));
    expect(created.map((d) => d.kind)).toEqual(["level", "level"]);
    expect(toolButton("Level (l)").getAttribute("aria-pressed")).toBe("true");
    // the key puts it down as the button does
    act(() => {
      fireEvent.keyDown(screen.getByRole("region"), { key: "Escape" });
    });
    expect(toolButton("Level (l)").getAttribute("aria-pressed")).toBe("false");
  });

  it("snap a pin to the trace's value at its time, wherever the click was", async () => {
    const created: MarkDraft[] = [];
    wrap(<TraceViewer traces={[SIGNAL_TRACE as TraceInfo]} onCreateMark={(d) => created.push(d)} />);
    const over = await plotOver();
    fireEvent.click(toolButton("Pin (p)"));
    // 5.8 ms lies on the spark line; the click is near the top of the plot (about 10 V)
    press(over, xOf(0.0058), 15);
    const input = (await screen.findByLabelText(/^Label for the new pin/)) as HTMLInputElement;
    // the prompt says where the pin stands: on the 1.5 V spark line
    expect(input.labels?.[0]?.textContent).toMatch(/at 5\.8\d* ms, 1\.5 V$/);
    fireEvent.click(screen.getByRole("button", { name: "Add pin" }));
    expect(created).toHaveLength(1);
    expect(created[0].kind).toBe("pin");
    // stored in the file's unit (volts): the signal's spark line level
    expect(created[0].level).toBeCloseTo(SIGNAL.sparkV, 6);

    // a click near the top of the firing line (5.01 ms, inside the 20 µs spike) pins its peak
    fireEvent.click(toolButton("Pin (p)"));
    press(over, xOf(0.00501), 15);
    await screen.findByLabelText(/^Label for the new pin/);
    fireEvent.click(screen.getByRole("button", { name: "Add pin" }));
    expect(created[1].level).toBeCloseTo(SIGNAL.spikeV, 6);
  });
});

// @vitest-environment jsdom
// the DOM stand-ins first: uPlot reads matchMedia as it loads
import { installDom, installWindowFetch, SIGNAL_TRACE } from "./dom";
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, render, screen, waitFor, within } from "@testing-library/react";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import { MemoryRouter, Route, Routes } from "react-router-dom";
import { CasePage } from "../../src/app/routes/cases/case-page";

/**
 * The case page of a live case (an expert has claimed it), by screen: on a phone (390 px, touch)
 * the live review comes before the case's details, the plot is the review's first content with no
 * chat beside it, the chat and the marks are one tap away in a sheet, and no keyboard hints show; on
 * a desk (1440 px) the chat is beside the plot without a tap. The flagged trace (the comparison's
 * odd one out) is the one open. The live room is a stand-in socket that joins at once.
 */

vi.mock("../../src/lib/socket", () => ({ createLiveSocket: () => fakeSocket() }));

const CASE_ID = "case-live";
const ids = ["tr-1", "tr-2", "tr-3"];

/** A socket that connects and joins at once, as the expert's own; everything else is acknowledged. */
function fakeSocket() {
  const handlers = new Map<string, ((...a: unknown[]) => void)[]>();
  const on = (ev: string, fn: (...a: unknown[]) => void) => (handlers.set(ev, [...(handlers.get(ev) ?? []), fn]), sock);
  const sock = {
    connected: false,
    active: true,
    on,
    removeAllListeners: () => handlers.clear(),
    disconnect: () => {},
    timeout: () => sock,
    emit: (ev: string, _payload: unknown, cb?: (err: unknown, res: unknown) => void) => {
      if (ev === "case:join") {
        cb?.(null, {
          ok: true,
          caseId: CASE_ID,
          seq: 0,
          annotations: [],
          messages: [],
          presence: {
            caseId: CASE_ID,
            participants: [
              { userId: "u-exp", name: "Sam Okafor", role: "expert", color: "#8a3d74", typing: false, connections: 1 },
            ],
          },
          view: null,
          you: { userId: "u-exp", name: "Sam Okafor", role: "expert", color: "#8a3d74" },
          abilities: { annotate: true, chat: true, requestData: true },
          caseStatus: "claimed",
          reset: false,
        });
      }
      return sock;
    },
    connect: () => {
      sock.connected = true;
      for (const fn of handlers.get("connect") ?? []) fn();
    },
  };
  return sock;
}

const analysis = {
  kind: "secondary-ignition",
  unit: "V",
  events: [],
  summary: { eventCount: 2, rpm: 1500, polarity: "positive", noise: 0.002 },
  findings: [],
};
const liveCase = {
  id: CASE_ID,
  status: "claimed",
  vehicle: {
    vin: null,
    year: 2018,
    make: "Veltra",
    model: "Orvane",
    engine: "1.8 I4",
    fuel: null,
    mileage: null,
    mileageUnit: null,
    transmission: null,
  },
  complaint: "Misfire on cylinder 2 under load",
  codes: ["P0302"],
  system: "ignition",
  symptoms: ["misfire"],
  conditions: null,
  testsDone: null,
  partsReplaced: null,
  notes: null,
  photos: [],
  abilities: { read: true },
  traces: ids.map((id, i) => ({
    ...SIGNAL_TRACE,
    id,
    name: `coil${i + 1}.csv`,
    kind: "secondary-ignition",
    settings: { ...SIGNAL_TRACE.settings, cylinder: i + 1 },
    analysis,
  })),
  // cylinder 2's burn time stands out (the modified z-score rule's verdict, as the server sends it)
  comparison: {
    metrics: [
      {
        metric: "burnTimeMs",
        unit: "ms",
        median: 1.5,
        values: [
          { traceId: ids[0], value: 1.5 },
          { traceId: ids[1], value: 0.75 },
          { traceId: ids[2], value: 1.5 },
        ],
      },
    ],
    outliers: [{ traceId: ids[1], metric: "burnTimeMs", value: 0.75, median: 1.5, score: -6.7 }],
  },
};

function renderCase() {
  installWindowFetch({
    [`/api/cases/${CASE_ID}`]: liveCase,
    "/api/me": { id: "u-exp", name: "Sam Okafor", role: "expert" },
  });
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false } } });
  return render(
    <QueryClientProvider client={qc}>
      <MemoryRouter initialEntries={[`/cases/${CASE_ID}`]}>
        <Routes>
          <Route path="/cases/:id" element={<CasePage />} />
        </Routes>
      </MemoryRouter>
    </QueryClientProvider>,
  );
}

/** Whether `a` comes before `b` in the document. */
const before = (a: Element, b: Element) => !!(a.compareDocumentPosition(b) & Node.DOCUMENT_POSITION_FOLLOWING);

afterEach(() => {
  cleanup();
  vi.restoreAllMocks();
});

describe("the live case page", () => {
  it("on a phone: the plot first, the chat and the marks one tap away, no keyboard hints", async () => {
    installDom({ width: 390, touch: true }, { width: 390, height: 300 });
    renderCase();
    const live = await screen.findByRole("region", { name: "Live review" });
    await within(live).findByText("Live");
    // before the case's details
    expect(before(live, screen.getByRole("heading", { name: "Vehicle" }))).toBe(true);
    // the plot is the review's content; the flagged trace (cylinder 2) is open
    const plot = await within(live).findByRole("img");
    expect(within(live).getByRole("tab", { selected: true }).textContent).toMatch(/^Cylinder 2/);
    // no chat and no marks list beside it until asked for
    expect(screen.queryByRole("textbox", { name: "Message" })).toBeNull();
    expect(within(live).queryByRole("heading", { name: /^Marks/ })).toBeNull();
    expect(before(plot, screen.getByRole("navigation", { name: "Chat and marks" }))).toBe(true);
    // no keyboard hints on a touch screen
    expect(screen.queryByText(/Keys:/)).toBeNull();
    expect(screen.queryAllByRole("button", { name: /\((\+|−|0|c|p|s|l|n)\)$/ })).toEqual([]);

    // one tap: the chat, ready to write
    fireEvent.click(
      within(screen.getByRole("navigation", { name: "Chat and marks" })).getByRole("button", { name: /^Chat/ }),
    );
    const sheet = screen.getByRole("dialog", { name: "Chat and marks" });
    expect(within(sheet).getByRole("textbox", { name: "Message" })).toBeTruthy();
    expect(screen.queryByText("Enter sends · Shift+Enter starts a new line")).toBeNull();
    // the marks are the sheet's other tab
    fireEvent.click(within(sheet).getByRole("tab", { name: /^Marks/ }));
    expect(within(sheet).getByText("No marks yet.")).toBeTruthy();
    fireEvent.click(screen.getByRole("button", { name: "Lower the panel" }));
    expect(screen.queryByRole("textbox", { name: "Message" })).toBeNull();
  });

  it("on a desk: plot and chat side by side, no sheet", async () => {
    installDom({ width: 1440, touch: false }, { width: 900, height: 400 });
    renderCase();
    const live = await screen.findByRole("region", { name: "Live review" });
    await within(live).findByText("Live");
    const chat = within(live).getByRole("region", { name: "Chat" });
    expect(within(chat).getByRole("textbox", { name: "Message" })).toBeTruthy();
    expect(screen.queryByRole("navigation", { name: "Chat and marks" })).toBeNull();
    // the plot's column and the chat share one row of the review's grid
    const plot = await within(live).findByRole("img");
    const row = chat.parentElement!;
    expect(row.className).toMatch(/grid-cols-\[minmax\(0,1fr\)_22rem\]/);
    expect(row.contains(plot)).toBe(true);
    // on a desk the marks are listed beside the plot and the keys are told
    await waitFor(() => expect(within(live).getByRole("heading", { name: /^Marks/ })).toBeTruthy());
    expect(within(live).getByText(/Keys:/)).toBeTruthy();
    expect(within(live).getByRole("button", { name: "Pin (p)" })).toBeTruthy();
  });
});

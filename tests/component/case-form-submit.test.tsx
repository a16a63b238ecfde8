// @vitest-environment jsdom
/**
 * Submitting from the case form (issue 13): the pay action sits at the end of the draft form and
 * is live only when the case is ready by the one readiness rule (shared/domain/case-readiness.ts:
 * make, model, complaint and system); paying saves unsaved changes first, then starts the checkout
 * (`POST /api/cases/:id/submit { tier }`, docs/api.md) and sends the browser to it. The form and
 * the pay step are composed as the draft page composes them (src/app/routes/cases/draft.tsx).
 */
import { useRef } from "react";
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, screen, waitFor } from "@testing-library/react";
import { CaseForm } from "../../src/features/cases/components/case-form";
import { SubmitCase } from "../../src/features/submit/components/submit-case";
import type { CaseDetail } from "../../src/features/cases/api/types";
import { fakeServer, renderWithApp } from "./helpers";

const assign = vi.fn();
beforeEach(() => {
  assign.mockReset();
  vi.stubGlobal("location", { ...globalThis.location, assign });
});
afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const draft = {
  id: "c1",
  status: "draft",
  vehicle: {
    vin: null,
    year: 2018,
    make: "Veltra",
    model: "Quillon",
    engine: null,
    fuel: null,
    mileage: null,
    mileageUnit: "mi",
    transmission: null,
  },
  complaint: null,
  codes: [],
  system: null,
  symptoms: [],
  conditions: {},
  testsDone: null,
  partsReplaced: null,
  notes: null,
  photos: [],
  traces: [],
} as unknown as CaseDetail;

const workflow = {
  id: "c1",
  status: "draft",
  deadlineAt: null,
  expertId: null,
  claimedAt: null,
  tier: null,
  priceCents: null,
  expert: null,
  payment: null,
  paymentMessage: null,
  needsDataMessage: null,
  notFixedCount: 0,
  answers: [],
  confirmations: [],
  pricing: {
    currency: "usd",
    tiers: [
      { id: "standard", label: "Standard", description: null, priceCents: 4900, deadlineMinutes: 1440, active: true },
      { id: "priority", label: "Priority", description: null, priceCents: 9900, deadlineMinutes: 120, active: true },
    ],
  },
  shopId: "s1",
  shopName: "Fernhollow Garage",
  casebookEntryId: null,
  abilities: { read: true, history: true, submit: true, withdraw: true, deleteDraft: true, viewPayment: true },
};

function DraftForm() {
  const saveRef = useRef<(() => Promise<string>) | null>(null);
  return (
    <CaseForm
      caseId="c1"
      initial={draft}
      saveRef={saveRef}
      submitStep={({ ready }) => (
        <SubmitCase caseId="c1" status="draft" ready={ready} beforePay={() => saveRef.current!()} />
      )}
    />
  );
}

describe("the draft form's pay step", () => {
  it("waits until the case is ready, then saves and goes to the checkout of the chosen tier", async () => {
    const server = fakeServer({
      "GET /api/cases/c1/workflow": () => ({ body: workflow }),
      "PATCH /api/cases/c1": (req) => ({ body: { ...draft, ...(req.body as object) } }),
      "POST /api/cases/c1/submit": () => ({
        status: 201,
        body: {
          checkoutUrl: "http://127.0.0.1:9/checkout/cs_test_1",
          paymentId: "p1",
          tier: "priority",
          amountCents: 9900,
          currency: "usd",
          deadlineMinutes: 120,
        },
      }),
    });
    renderWithApp(<DraftForm />, "/cases/c1/edit");
    const blocked = await screen.findByRole("button", { name: "Fill in what the desk needs first" });
    expect((blocked as HTMLButtonElement).disabled).toBe(true);
    // the readiness list names what is missing
    expect(screen.getByRole("region", { name: "Ready for the desk?" }).textContent).toMatch(/complaint/i);

    fireEvent.change(screen.getByRole("textbox", { name: "What the customer reports" }), {
      target: { value: "Misfire under load, worse when hot." },
    });
    fireEvent.click(screen.getByRole("radio", { name: "Ignition" }));
    fireEvent.click(screen.getByRole("radio", { name: /Priority/ }));
    const pay = await screen.findByRole("button", { name: "Pay $99.00 and submit" });
    expect((pay as HTMLButtonElement).disabled).toBe(false);
    expect(server.sent.filter((r) => r.method !== "GET")).toEqual([]);

    fireEvent.click(pay);
    await waitFor(() => expect(assign).toHaveBeenCalledWith("http://127.0.0.1:9/checkout/cs_test_1"));
    const writes = server.sent.filter((r) => r.method !== "GET");
    // the unsaved answers are saved first, then the checkout is opened for the chosen tier
    expect(writes.map((r) => `${r.method} ${r.url}`)).toEqual(["PATCH /api/cases/c1", "POST /api/cases/c1/submit"]);
    expect(writes[0].body).toMatchObject({ complaint: "Misfire under load, worse when hot.", system: "ignition" });
    expect(writes[1].body).toEqual({ tier: "priority" });
  });

  it("a draft offers 'Delete draft' (not a withdrawal) and asks before deleting", async () => {
    const server = fakeServer({
      "GET /api/cases/c1/workflow": () => ({ body: workflow }),
      "DELETE /api/cases/c1": () => ({ body: { id: "c1", deleted: true, traces: 0, photos: 0 } }),
    });
    renderWithApp(<DraftForm />, "/cases/c1/edit");
    fireEvent.click(await screen.findByRole("button", { name: "Delete draft" }));
    expect(screen.queryByRole("button", { name: "Withdraw the case" })).toBeNull();
    expect(server.sent.filter((r) => r.method === "DELETE")).toEqual([]);
    fireEvent.click(screen.getByRole("button", { name: "Yes, delete the draft" }));
    await waitFor(() =>
      expect(server.sent.filter((r) => r.method === "DELETE").map((r) => r.url)).toEqual(["/api/cases/c1"]),
    );
  });
});

// @vitest-environment jsdom
/**
 * The admin's refund and reassign on a case (src/features/desk/components/admin-case-actions.tsx):
 * each asks for a reason, then shows what will happen and sends nothing until the admin confirms;
 * "Back" and "Cancel" send nothing. The request bodies are those of docs/api.md
 * (`POST /api/admin/cases/:id/refund { reason }`, `…/reassign { expertId, reason }`).
 */
import { afterEach, describe, expect, it, vi } from "vitest";
import { cleanup, fireEvent, screen, waitFor, within } from "@testing-library/react";
import { AdminCaseActions } from "../../src/features/desk/components/admin-case-actions";
import type { WorkflowView } from "../../shared/views/workflow";
import { fakeServer, renderWithApp } from "./helpers";

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

const payment = {
  id: "p1",
  status: "authorized" as const,
  tier: "standard",
  tierLabel: "Standard",
  amountCents: 4900,
  currency: "usd",
  deadlineMinutes: 1440,
  checkoutUrl: null,
  message: null,
  cardBrand: "visa",
  cardLast4: "4242",
  authorizedAt: "2026-12-05T10:00:00.000Z",
  capturedAt: null,
  releasedAt: null,
  refundedAt: null,
  receiptNumber: null,
};

function claimedCase(): WorkflowView {
  const no = false;
  return {
    id: "c1",
    status: "claimed",
    deadlineAt: "2026-12-06T10:00:00.000Z",
    expertId: "e1",
    claimedAt: "2026-12-05T11:00:00.000Z",
    tier: "standard",
    priceCents: 4900,
    expert: { id: "e1", name: "Orla Penrose" },
    payment,
    paymentMessage: null,
    needsDataMessage: null,
    notFixedCount: 0,
    answers: [],
    confirmations: [],
    pricing: null,
    shopId: "s1",
    shopName: "Fernhollow Garage",
    casebookEntryId: null,
    abilities: {
      read: true,
      history: true,
      submit: no,
      withdraw: no,
      claim: no,
      release: true,
      reassign: true,
      requestData: no,
      dataSent: no,
      answer: no,
      confirm: no,
      refund: true,
      viewPayment: true,
      deleteDraft: no,
    },
  };
}

const experts = {
  experts: [
    { userId: "e1", name: "Orla Penrose", available: true, maxOpenCases: 4, systems: ["ignition"] },
    { userId: "e2", name: "Tamsin Greaves", available: true, maxOpenCases: 4, systems: ["ignition"] },
  ],
};

describe("refund", () => {
  it("asks for a reason, shows what will happen, and sends only on confirmation", async () => {
    const server = fakeServer({
      "GET /api/admin/experts?status=approved": () => ({ body: experts }),
      "POST /api/admin/cases/c1/refund": () => ({
        body: { id: "c1", status: "refunded", payment: { ...payment, status: "released" }, balance: {} },
      }),
    });
    renderWithApp(<AdminCaseActions w={claimedCase()} />);
    fireEvent.click(screen.getByRole("button", { name: "Refund the payment…" }));
    const panel = screen.getByRole("region", { name: "Refund the payment" });
    const review = within(panel).getByRole("button", { name: "Review" });
    expect((review as HTMLButtonElement).disabled).toBe(true);
    fireEvent.change(within(panel).getByLabelText("Reason"), { target: { value: "Shop paid twice for one car." } });
    fireEvent.click(review);
    // the second step says what happens: a held payment is released, the open case ends
    expect(
      within(panel).getByText(
        "Release the $49.00 hold on Fernhollow Garage's card. The case ends now and no expert can answer it. " +
          "Reason: “Shop paid twice for one car.”.",
      ),
    ).toBeTruthy();
    fireEvent.click(within(panel).getByRole("button", { name: "Back" }));
    fireEvent.click(within(panel).getByRole("button", { name: "Review" }));
    expect(server.sent.filter((r) => r.method === "POST")).toEqual([]);
    fireEvent.click(within(panel).getByRole("button", { name: "Yes, release $49.00" }));
    await waitFor(() => expect(server.sent.some((r) => r.method === "POST")).toBe(true));
    expect(server.sent.filter((r) => r.method === "POST")).toEqual([
      { method: "POST", url: "/api/admin/cases/c1/refund", body: { reason: "Shop paid twice for one car." } },
    ]);
    await screen.findByText("Done: hold released, nothing charged.");
  });

  it("cancel sends nothing", () => {
    const server = fakeServer({ "GET /api/admin/experts?status=approved": () => ({ body: experts }) });
    renderWithApp(<AdminCaseActions w={claimedCase()} />);
    fireEvent.click(screen.getByRole("button", { name: "Refund the payment…" }));
    fireEvent.click(screen.getByRole("button", { name: "Cancel" }));
    expect(screen.queryByRole("region", { name: "Refund the payment" })).toBeNull();
    expect(server.sent.filter((r) => r.method === "POST")).toEqual([]);
  });

  it("shows the server's refusal and keeps the step open", async () => {
    fakeServer({
      "GET /api/admin/experts?status=approved": () => ({ body: experts }),
      "POST /api/admin/cases/c1/refund": () => ({
        status: 409,
        body: { error: { code: "not_refundable", message: "There is no held or captured payment on this case." } },
      }),
    });
    renderWithApp(<AdminCaseActions w={claimedCase()} />);
    fireEvent.click(screen.getByRole("button", { name: "Refund the payment…" }));
    fireEvent.change(screen.getByLabelText("Reason"), { target: { value: "Test" } });
    fireEvent.click(screen.getByRole("button", { name: "Review" }));
    fireEvent.click(screen.getByRole("button", { name: "Yes, release $49.00" }));
    await screen.findByText("There is no held or captured payment on this case.");
    expect(screen.getByRole("region", { name: "Refund the payment" })).toBeTruthy();
  });
});

describe("reassign", () => {
  it("offers the other approved experts, needs a reason, and names the expert before sending", async () => {
    const server = fakeServer({
      "GET /api/admin/experts?status=approved": () => ({ body: experts }),
      "POST /api/admin/cases/c1/reassign": () => ({
        body: { id: "c1", status: "claimed", deadlineAt: null, expertId: "e2", claimedAt: null },
      }),
    });
    renderWithApp(<AdminCaseActions w={claimedCase()} />);
    fireEvent.click(screen.getByRole("button", { name: "Hand to another expert…" }));
    const panel = screen.getByRole("region", { name: "Hand the case to another expert" });
    const select = within(panel).getByLabelText("Expert") as HTMLSelectElement;
    // the expert on the case is not offered
    await waitFor(() => expect(select.options.length).toBe(2));
    expect([...select.options].map((o) => o.textContent)).toEqual(["Choose an approved expert", "Tamsin Greaves"]);
    fireEvent.change(select, { target: { value: "e2" } });
    const review = within(panel).getByRole("button", { name: "Review" }) as HTMLButtonElement;
    expect(review.disabled).toBe(true);
    fireEvent.change(within(panel).getByLabelText("Reason"), { target: { value: "Orla is away today." } });
    fireEvent.click(review);
    expect(within(panel).getByText(/Take the case from Orla Penrose and hand it to Tamsin Greaves\./)).toBeTruthy();
    expect(server.sent.filter((r) => r.method === "POST")).toEqual([]);
    fireEvent.click(within(panel).getByRole("button", { name: "Yes, hand it to Tamsin Greaves" }));
    await waitFor(() =>
      expect(server.sent.filter((r) => r.method === "POST")).toEqual([
        {
          method: "POST",
          url: "/api/admin/cases/c1/reassign",
          body: { expertId: "e2", reason: "Orla is away today." },
        },
      ]),
    );
  });
});

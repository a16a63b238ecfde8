/**
 * The answer (captures the held payment), the shop's confirmation, second rounds, closing, the
 * casebook hook and the history of who did what when.
 *
 * External references for the expected values:
 * - Stripe API reference, capture a PaymentIntent: after capture the intent is "succeeded" and
 *   amount_received equals the amount captured (docs.stripe.com/api/payment_intents/capture).
 * - Stripe docs, "Place a hold on a payment method": an uncaptured authorisation must be captured
 *   before the charge's payment_method_details.card.capture_before, after which it is released.
 * - The desk's share: 20 % (2000 basis points, 1 bp = 1/100 of a percent) of 4900 cents is
 *   4900 × 2000 / 10000 = 980 cents; the expert receives the rest, 3920 (plain arithmetic).
 */
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createExpert, createShopTeam, signIn, type CreatedExpert } from "../factories";
import {
  caseRow,
  expectLedgerBalanced,
  fakeIntent,
  flushMail,
  insertDraftCase,
  mailsTo,
  movableClock,
  paymentsOf,
  submitAndPay,
} from "../helpers/queue-flow";
import { schema } from "../../server/db/client";
import { onCaseResolved } from "../../server/workflow/hooks";
import { sweepCloseAnswered } from "../../server/workflow/sweeps";
import { expertRecords } from "../../server/workflow/routing";
import { ignitionSafetyNote } from "../../shared/schemas/queue";

let server: TestServer;
let expert: CreatedExpert;
let clock: ReturnType<typeof movableClock>;

const ANSWER = {
  diagnosis:
    "Secondary burn time on cylinder 3 is short with a rising spark line: the coil boot is tracking to ground.",
  rootCause: "Cracked coil boot on cylinder 3.",
  recommendedFix: "Replace the cylinder 3 coil boot and inspect the spark plug well for oil.",
  testsToConfirm:
    "Recapture secondary on cylinder 3 at idle and at 2500 rpm; compare burn time with the other cylinders.",
};

beforeAll(async () => {
  server = await startTestServer();
  expert = await createExpert(server, { systems: ["ignition"], maxOpenCases: 20 });
});
beforeEach(() => {
  clock = movableClock(server);
});
afterAll(async () => server?.close());
afterEach(async () => {
  await server.fakeStripe!.idle();
  await expectLedgerBalanced(server, "all");
});

async function claimedCase() {
  const t = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, t.technicians[0]);
  const owner = await signIn(server, t.owner);
  const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
  const paid = await submitAndPay(server, tech, caseId);
  const e = await signIn(server, expert);
  expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
  return { ...t, tech, owner, e, caseId, piId: paid.paymentIntentId! };
}

describe("answer", () => {
  it("answer → captured: the PaymentIntent is captured once, the ledger splits it, mails go out", async () => {
    const { caseId, e, piId, technicians, owner: ownerAgent } = await claimedCase();
    const t = { owner: ownerAgent };
    expect(fakeIntent(server, piId).status).toBe("requires_capture");
    const bad = await e.post(`/api/cases/${caseId}/answer`).send({ ...ANSWER, rootCause: "  " });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].path).toBe("rootCause");

    const res = await e.post(`/api/cases/${caseId}/answer`).send(ANSWER);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      status: "answered",
      captured: true,
      answer: { round: 1, safetyNote: ignitionSafetyNote },
    });

    const pi = fakeIntent(server, piId);
    expect(pi.status).toBe("succeeded");
    expect(pi.amount_received).toBe(4900);
    const b = await expectLedgerBalanced(server, caseId);
    expect(b).toMatchObject({
      authorizedCents: 4900,
      capturedCents: 4900,
      heldCents: 0,
      deskShareCents: 980,
      expertEarningsCents: 3920,
    });

    const answered = await server.mailCatcher!.waitFor(
      (m) => m.to.includes(technicians[0].email) && /^Answer ready/.test(m.subject),
    );
    expect(answered.text).toContain("coil boot");
    expect(answered.text).toContain("tens of kilovolts");
    const receipt = await server.mailCatcher!.waitFor(
      (m) => m.to.includes(t.owner.user.email) && /^Receipt/.test(m.subject),
    );
    expect(receipt.text).toContain("$49.00");
    expect(receipt.text).toMatch(/Receipt number BL-\d{8}-[0-9A-F]{8}/);

    // the shop reads the answer; another expert cannot
    const wf = await t.owner.get(`/api/cases/${caseId}/workflow`);
    expect(wf.body.answers[0]).toMatchObject({ diagnosis: ANSWER.diagnosis, expertName: expert.name });
    expect(wf.body.abilities.confirm).toBe(true);
    const stranger = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    expect((await stranger.get(`/api/cases/${caseId}/answers`)).status).toBe(404);

    // answering twice is a 409 and captures nothing more
    const twice = await e.post(`/api/cases/${caseId}/answer`).send(ANSWER);
    expect(twice.status).toBe(409);
    expect(fakeIntent(server, piId).amount_received).toBe(4900);
  });

  it("only the expert on the case may answer", async () => {
    const { caseId, tech, piId } = await claimedCase();
    const other = await signIn(server, await createExpert(server, { systems: ["ignition"] }));
    expect((await other.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(404);
    expect((await tech.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(403);
    expect((await caseRow(server, caseId)).status).toBe("claimed");
    expect(fakeIntent(server, piId).status).toBe("requires_capture");
  });

  it("never captures at or after the hold's capture_before: the hold is released instead", async () => {
    const { caseId, e, piId } = await claimedCase();
    const p = (await paymentsOf(server, caseId))[0];
    // capture_before = authorisation + 7 days (Stripe's hold validity for online card payments)
    const charge = server.fakeStripe!.state.charges[fakeIntent(server, piId).latest_charge!];
    expect(p.captureBefore!.getTime()).toBe(charge.payment_method_details.card.capture_before! * 1000);
    expect(p.captureBefore!.getTime() - p.authorizedAt!.getTime()).toBeGreaterThan(7 * 86_400_000 - 60_000);
    clock.advance(p.captureBefore!.getTime() - Date.now() + 1000);
    const res = await e.post(`/api/cases/${caseId}/answer`).send(ANSWER);
    expect(res.status).toBe(201);
    expect(res.body.captured).toBe(false);
    const pi = fakeIntent(server, piId);
    expect(pi.amount_received).toBe(0);
    expect(pi.status).toBe("canceled");
    // no capture reached Stripe at all
    expect(
      server
        .fakeStripe!.events("charge.captured")
        .filter((ev) => (ev.data.object as { payment_intent: string }).payment_intent === piId),
    ).toEqual([]);
    expect(await expectLedgerBalanced(server, caseId)).toMatchObject({
      capturedCents: 0,
      releasedCents: 4900,
      heldCents: 0,
    });
  });

  it("a hold that lapses at Stripe while the case is open ends it as refunded", async () => {
    const { caseId, piId, technicians } = await claimedCase();
    server.fakeStripe!.advanceClock(7 * 86_400 + 60);
    try {
      await server.fakeStripe!.idle();
      expect(fakeIntent(server, piId)).toMatchObject({ status: "canceled", cancellation_reason: "automatic" });
      expect((await caseRow(server, caseId)).status).toBe("refunded");
      await server.mailCatcher!.waitFor((m) => m.to.includes(technicians[0].email) && /^Hold released/.test(m.subject));
      expect(await expectLedgerBalanced(server, caseId)).toMatchObject({ releasedCents: 4900, heldCents: 0 });
    } finally {
      // later tests authorise fresh holds at the fake's moved clock; their capture_before lies a week after it
    }
  });
});

describe("confirmation", () => {
  it("fixed → resolved, rated, and the casebook hook runs once", async () => {
    const { caseId, e, tech } = await claimedCase();
    expect((await e.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(201);
    const seen: string[] = [];
    const hook = (_ctx: unknown, id: string) => void seen.push(id);
    onCaseResolved.push(hook);
    try {
      expect((await tech.post(`/api/cases/${caseId}/confirm`).send({ fixed: true, rating: 6 })).status).toBe(400);
      const res = await tech
        .post(`/api/cases/${caseId}/confirm`)
        .send({ fixed: true, note: "New boot, misfire gone.", rating: 5 });
      expect(res.status).toBe(200);
      expect(res.body).toMatchObject({ status: "resolved", outcome: "resolved" });
    } finally {
      onCaseResolved.splice(onCaseResolved.indexOf(hook), 1);
    }
    expect(seen).toEqual([caseId]);
    expect((await server.ctx.db.read((tx) => expertRecords(tx))).get(expert.id)).toMatchObject({
      resolved: expect.any(Number),
      rating: expect.any(Number),
    });
    await server.mailCatcher!.waitFor((m) => m.to.includes(expert.email) && /^Fix confirmed/.test(m.subject));
    expect((await tech.post(`/api/cases/${caseId}/confirm`).send({ fixed: true })).status).toBe(409);

    // who did what when
    const hist = await tech.get(`/api/cases/${caseId}/history`);
    const steps = hist.body.items
      .filter((i: { toStatus: string | null }) => i.toStatus)
      .map((i: { type: string; actorRole: string | null; toStatus: string }) => [i.type, i.actorRole, i.toStatus]);
    expect(steps).toEqual([
      ["submitted", "technician", "awaiting_payment"],
      ["payment_authorized", null, "queued"],
      ["claimed", "expert", "claimed"],
      ["answered", "expert", "answered"],
      ["fix_confirmed", "technician", "resolved"],
    ]);
    expect(hist.body.items.every((i: { at: string }) => !Number.isNaN(Date.parse(i.at)))).toBe(true);
    expect((await expectLedgerBalanced(server, caseId)).capturedCents).toBe(4900);
  });

  it("not fixed → back to the same expert once; the second answer captures nothing more; not fixed again → closed", async () => {
    const { caseId, e, tech, piId } = await claimedCase();
    expect((await e.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(201);
    const first = await tech
      .post(`/api/cases/${caseId}/confirm`)
      .send({ fixed: false, note: "Still misfires when hot." });
    expect(first.body).toMatchObject({ status: "claimed", outcome: "reopened" });
    expect((await caseRow(server, caseId)).expertId).toBe(expert.id);
    await server.mailCatcher!.waitFor(
      (m) =>
        m.to.includes(expert.email) && /^Not fixed yet/.test(m.subject) && m.text.includes("Still misfires when hot"),
    );

    const second = await e
      .post(`/api/cases/${caseId}/answer`)
      .send({ ...ANSWER, diagnosis: "Injector 3 drips when hot." });
    expect(second.status).toBe(201);
    expect(second.body.answer.round).toBe(2);
    expect(fakeIntent(server, piId).amount_received).toBe(4900);
    const captures = (
      await server.ctx.db.read((tx) =>
        tx.select().from(schema.ledgerEntry).where(eq(schema.ledgerEntry.caseId, caseId)).all(),
      )
    ).filter((x) => x.kind === "capture");
    expect(captures).toHaveLength(1);

    const last = await tech.post(`/api/cases/${caseId}/confirm`).send({ fixed: false });
    expect(last.body).toMatchObject({ status: "closed", outcome: "closed" });
    const answers = await tech.get(`/api/cases/${caseId}/answers`);
    expect(answers.body.answers.map((a: { round: number }) => a.round)).toEqual([1, 2]);
    expect(answers.body.confirmations.map((c: { fixed: boolean }) => c.fixed)).toEqual([false, false]);
  });

  it("an answered case with no confirmation is closed after the set days (7 by default)", async () => {
    const { caseId, e } = await claimedCase();
    expect((await e.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(201);
    clock.advance(6 * 86_400_000);
    expect(await sweepCloseAnswered(server.ctx)).toBe(0);
    expect((await caseRow(server, caseId)).status).toBe("answered");
    clock.advance(86_400_000 + 1000);
    expect(await sweepCloseAnswered(server.ctx)).toBeGreaterThanOrEqual(1);
    expect((await caseRow(server, caseId)).status).toBe("closed");
    // the money stays captured: closing is not a refund
    expect(await expectLedgerBalanced(server, caseId)).toMatchObject({ capturedCents: 4900, refundedCents: 0 });
    await flushMail(server);
    expect(mailsTo(server, expert.email, /^Closed/)).toEqual([]); // in-app only
    const n = await (await signIn(server, expert)).get("/api/notifications");
    expect(
      n.body.items.some((i: { kind: string; caseId: string }) => i.kind === "case_closed" && i.caseId === caseId),
    ).toBe(true);
  });
});

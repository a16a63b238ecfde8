/**
 * Money: the ledger across mixed scenarios, admin pricing, refunds, payouts to connected accounts,
 * the owner's billing with receipts, the expert's earnings, notifications.
 *
 * External references for the expected values:
 * - Stripe API reference, Transfers: a transfer moves `amount` to the `destination` connected
 *   account and returns a `tr_…` object (docs.stripe.com/api/transfers/create).
 * - Stripe API reference, Refunds: a full refund of a captured charge sets charge.amount_refunded
 *   to the captured amount (docs.stripe.com/api/refunds/create).
 * - Basis points: 1 bp = 0.01 %, so 1500 bp of 12 345 cents = 1851.75 → 1851 cents to the desk
 *   (rounded down, shared/domain/money.ts splitCents) and 10 494 to the expert; they sum to 12 345.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createAdmin, createExpert, createShopTeam, signIn, type CreatedExpert } from "../factories";
import { CARDS, caseRow, expectLedgerBalanced, fakeIntent, insertDraftCase, submitAndPay } from "../helpers/queue-flow";
import { ledgerBalance } from "../../server/payments/ledger";
import { runPayouts } from "../../server/payments/payouts";

let server: TestServer;
let expert: CreatedExpert;
let admin: Awaited<ReturnType<typeof signIn>>;

const ANSWER = {
  diagnosis: "Open secondary on 2.",
  rootCause: "Coil 2 winding open.",
  recommendedFix: "Replace coil 2.",
  testsToConfirm: "Recapture secondary on 2.",
};

beforeAll(async () => {
  server = await startTestServer();
  expert = await createExpert(server, { systems: ["ignition"], maxOpenCases: 50 });
  admin = await signIn(server, await createAdmin(server));
});
afterAll(async () => server?.close());
afterEach(async () => {
  await server.fakeStripe!.idle();
  await expectLedgerBalanced(server, "all");
});

async function answeredCase(tier = "standard") {
  const t = await createShopTeam(server, { technicians: 1 });
  const tech = await signIn(server, t.technicians[0]);
  const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
  const paid = await submitAndPay(server, tech, caseId, { tier });
  const e = await signIn(server, expert);
  expect((await e.post(`/api/cases/${caseId}/claim`)).status).toBe(200);
  expect((await e.post(`/api/cases/${caseId}/answer`).send(ANSWER)).status).toBe(201);
  return { ...t, tech, caseId, piId: paid.paymentIntentId!, e };
}

describe("admin pricing", () => {
  it("GET/PUT /api/admin/pricing: integer cents, basis points; only admins; a new price applies to new cases only", async () => {
    const tech = await signIn(server, (await createShopTeam(server)).technicians[0]);
    expect((await tech.get("/api/admin/pricing")).status).toBe(403);
    const cur = await admin.get("/api/admin/pricing");
    expect(cur.status).toBe(200);
    expect(cur.body).toMatchObject({ currency: "usd", deskShareBasisPoints: 2000 });

    const body = {
      currency: "usd",
      deskShareBasisPoints: 1500,
      firstWaveSize: 2,
      widenAfterMinutes: 20,
      closeAnsweredAfterDays: 10,
      tiers: [
        { id: "standard", label: "Standard", priceCents: 12345, deadlineMinutes: 24 * 60, active: true },
        { id: "priority", label: "Priority", priceCents: 19900, deadlineMinutes: 120, active: true },
      ],
    };
    // validation: fractional cents, a share over 100 %, a duplicate tier
    expect(
      (await admin.put("/api/admin/pricing").send({ ...body, tiers: [{ ...body.tiers[0], priceCents: 49.5 }] })).status,
    ).toBe(400);
    expect((await admin.put("/api/admin/pricing").send({ ...body, deskShareBasisPoints: 10001 })).status).toBe(400);
    expect(
      (await admin.put("/api/admin/pricing").send({ ...body, tiers: [body.tiers[0], body.tiers[0]] })).status,
    ).toBe(400);
    expect((await tech.put("/api/admin/pricing").send(body)).status).toBe(403);
    const put = await admin.put("/api/admin/pricing").send(body);
    expect(put.status).toBe(200);
    expect(put.body.tiers.map((t: { id: string; priceCents: number }) => [t.id, t.priceCents])).toEqual([
      ["standard", 12345],
      ["priority", 19900],
    ]);

    const { caseId } = await answeredCase();
    const b = await expectLedgerBalanced(server, caseId);
    expect(b).toMatchObject({ capturedCents: 12345, deskShareCents: 1851, expertEarningsCents: 10494 });
    // back to the defaults for the other tests
    const reset = await admin.put("/api/admin/pricing").send({
      ...body,
      deskShareBasisPoints: 2000,
      firstWaveSize: 3,
      widenAfterMinutes: 30,
      closeAnsweredAfterDays: 7,
      tiers: [
        { ...body.tiers[0], priceCents: 4900 },
        { ...body.tiers[1], priceCents: 12900 },
      ],
    });
    expect(reset.status).toBe(200);
    // the case paid at the old price keeps it
    expect((await caseRow(server, caseId)).priceCents).toBe(12345);
  });
});

describe("refunds", () => {
  it("an admin refund of a captured case reverses the split; the ledger still balances", async () => {
    const { caseId, piId, owner } = await answeredCase();
    const res = await admin.post(`/api/admin/cases/${caseId}/refund`).send({ reason: "Goodwill" });
    expect(res.status).toBe(200);
    expect(res.body.payment.status).toBe("refunded");
    const charge = server.fakeStripe!.state.charges[fakeIntent(server, piId).latest_charge!];
    expect(charge.amount_refunded).toBe(4900);
    const b = await expectLedgerBalanced(server, caseId);
    expect(b).toMatchObject({ capturedCents: 4900, refundedCents: 4900, deskShareCents: 0, expertEarningsCents: 0 });
    await server.mailCatcher!.waitFor((m) => m.to.includes(owner.email) && /^Refund/.test(m.subject));
    // a second refund is refused
    expect((await admin.post(`/api/admin/cases/${caseId}/refund`).send({})).status).toBe(409);
    const tech = await signIn(server, (await createShopTeam(server)).technicians[0]);
    expect((await tech.post(`/api/admin/cases/${caseId}/refund`).send({})).status).toBe(403);
  });

  it("an admin refund of a queued case cancels the hold and ends the case as refunded", async () => {
    const t = await createShopTeam(server, { technicians: 1 });
    const tech = await signIn(server, t.technicians[0]);
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    const paid = await submitAndPay(server, tech, caseId);
    const res = await admin.post(`/api/admin/cases/${caseId}/refund`).send({});
    expect(res.status).toBe(200);
    expect(res.body.status).toBe("refunded");
    expect(fakeIntent(server, paid.paymentIntentId!).status).toBe("canceled");
    expect(await expectLedgerBalanced(server, caseId)).toMatchObject({ releasedCents: 4900, capturedCents: 0 });
  });
});

describe("payouts, earnings, billing", () => {
  it("pays the expert's unpaid earnings by transfer to a connected account, once", async () => {
    await answeredCase();
    await answeredCase();
    const e = await signIn(server, expert);
    const before = await e.get("/api/earnings");
    expect(before.status).toBe(200);
    const owed = before.body.totals.unpaidCents;
    expect(owed).toBeGreaterThan(0);
    // the cases of this file so far (tests run in order): one at 12 345 and 1500 bp → 10 494 to the expert;
    // one refunded (earning reversed → 0); two here at 4900 and 2000 bp → 3920 each
    expect(owed).toBe(10494 + 0 + 2 * 3920);

    // two runs at once pay the amount once
    const [a, b] = await Promise.all([admin.post("/api/admin/payouts").send({}), runPayouts(server.ctx, null)]);
    expect(a.status).toBe(200);
    const all = [
      ...a.body.payouts,
      ...b.map((p) => ({
        expertId: p.expertId,
        amountCents: p.amountCents,
        status: p.status,
        transferId: p.stripeTransferId,
      })),
    ].filter((p: { expertId: string }) => p.expertId === expert.id);
    expect(all).toHaveLength(1);
    expect(all[0]).toMatchObject({ amountCents: owed, status: "paid" });
    const transfers = Object.values(server.fakeStripe!.state.transfers).filter(
      (x) => x.metadata.expertId === expert.id,
    );
    expect(transfers).toHaveLength(1);
    const tr = server.fakeStripe!.state.transfers[all[0].transferId];
    expect(tr.amount).toBe(owed);
    expect(tr.destination).toMatch(/^acct_/);
    expect(server.fakeStripe!.state.accounts[tr.destination].capabilities.transfers).toBe("active");

    const after = await e.get("/api/earnings");
    expect(after.body.totals).toMatchObject({ paidCents: owed, unpaidCents: 0 });
    expect(after.body.payouts[0]).toMatchObject({ status: "paid", amountCents: owed });
    expect(
      after.body.cases.every(
        (c: { grossCents: number; deskCents: number; expertCents: number }) =>
          c.deskCents + c.expertCents === c.grossCents,
      ),
    ).toBe(true);
    await server.mailCatcher!.waitFor((m) => m.to.includes(expert.email) && /^Payout sent/.test(m.subject));
    expect((await server.ctx.db.read((tx) => ledgerBalance(tx))).payoutCents).toBeGreaterThanOrEqual(owed);
    // nothing left: another run pays nothing
    const again = await admin.post("/api/admin/payouts").send({ expertId: expert.id });
    expect(again.body.payouts).toEqual([]);
    expect((await e.get("/api/admin/payouts")).status).toBe(403);
  });

  it("the owner's billing lists receipts; technicians and other shops cannot see them", async () => {
    const { owner, caseId, shop } = await answeredCase("priority");
    const o = await signIn(server, owner);
    const bill = await o.get("/api/billing");
    expect(bill.status).toBe(200);
    expect(bill.body.totals).toMatchObject({ chargedCents: 12900, heldCents: 0 });
    const row = bill.body.payments.find((p: { caseId: string }) => p.caseId === caseId);
    expect(row).toMatchObject({ status: "captured", tierLabel: "Priority", amountCents: 12900, cardLast4: "4242" });
    const receipt = await o.get(`/api/billing/receipts/${row.id}`);
    expect(receipt.status).toBe(200);
    expect(receipt.body).toMatchObject({
      receiptNumber: row.receiptNumber,
      shopName: shop.name,
      amountCents: 12900,
      currency: "usd",
    });

    const tech = await signIn(server, (await createShopTeam(server)).technicians[0]);
    expect((await tech.get("/api/billing")).status).toBe(403);
    const otherOwner = await signIn(server, (await createShopTeam(server)).owner);
    expect((await otherOwner.get(`/api/billing/receipts/${row.id}`)).status).toBe(404);
    expect((await otherOwner.get("/api/billing")).body.payments).toEqual([]);
  });
});

describe("notifications", () => {
  it("lists the user's notifications and marks them read", async () => {
    const { tech, caseId } = await answeredCase();
    const list = await tech.get("/api/notifications");
    expect(list.status).toBe(200);
    const kinds = list.body.items
      .filter((i: { caseId: string }) => i.caseId === caseId)
      .map((i: { kind: string }) => i.kind);
    expect(kinds).toEqual(expect.arrayContaining(["payment_authorized", "case_claimed", "case_answered", "receipt"]));
    expect(list.body.unread).toBeGreaterThanOrEqual(4);
    const first = list.body.items[0];
    expect((await tech.post(`/api/notifications/${first.id}/read`)).status).toBe(204);
    expect((await tech.get("/api/notifications")).body.unread).toBe(list.body.unread - 1);
    const other = await signIn(server, expert);
    expect((await other.post(`/api/notifications/${first.id}/read`)).status).toBe(404);
    const all = await tech.post("/api/notifications/read-all");
    expect(all.body.marked).toBe(list.body.unread - 1);
    expect((await tech.get("/api/notifications?unread=1")).body.items).toEqual([]);
  });

  it("a declined card creates an in-app notice but no mail", async () => {
    const t = await createShopTeam(server, { technicians: 1 });
    const tech = await signIn(server, t.technicians[0]);
    const caseId = await insertDraftCase(server, { shopId: t.shop.id, createdBy: t.technicians[0].id });
    await submitAndPay(server, tech, caseId, { card: CARDS.declined });
    const list = await tech.get("/api/notifications");
    expect(list.body.items.map((i: { kind: string }) => i.kind)).toContain("payment_failed");
  });
});

/**
 * Helpers for the paid-queue integration tests: a draft case inserted straight into the database
 * (so these tests do not depend on the case form), submit + pay through the Stripe fake's hosted
 * checkout, a movable clock, and the ledger check against the fake's own record of the money.
 */
import { expect } from "vitest";
import type Stripe from "stripe";
import { eq } from "drizzle-orm";
import { schema } from "../../server/db/client";
import type { TestServer } from "./test-app";
import type { SignedInAgent } from "../factories/sign-in";
import { ledgerBalance, type LedgerBalance } from "../../server/payments/ledger";
import type { CaughtMail } from "../../server/fakes/smtp";
import { whenMailSent } from "../../server/services/notifications";

/** Stripe's published test cards (docs.stripe.com/testing#cards and #declined-payments). */
export const CARDS = {
  ok: "4242424242424242",
  declined: "4000000000000002",
  insufficient: "4000000000009995",
} as const;

export interface DraftCaseOptions {
  shopId: string;
  createdBy: string;
  system?: string | null;
  /** invented makes only */
  make?: string | null;
  complaint?: string | null;
  title?: string | null;
}

/** A draft case ready to submit (system, make and complaint filled in). */
export async function insertDraftCase(server: TestServer, o: DraftCaseOptions): Promise<string> {
  const id = crypto.randomUUID();
  const now = server.ctx.now();
  await server.ctx.db.write((tx) =>
    tx
      .insert(schema.caseTable)
      .values({
        id,
        shopId: o.shopId,
        createdBy: o.createdBy,
        status: "draft",
        title: o.title ?? null,
        year: 2016,
        make: o.make === undefined ? "Veltra" : o.make,
        model: "Quillon",
        engine: "2.0 I4",
        complaint: o.complaint === undefined ? "Intermittent misfire on cylinder 3 under load" : o.complaint,
        codes: ["P0303"],
        system: o.system === undefined ? "ignition" : o.system,
        createdAt: now,
        updatedAt: now,
      })
      .run(),
  );
  return id;
}

/** Replaces ctx.now with a clock that can be moved forward. */
export function movableClock(server: TestServer): { advance(ms: number): void; now(): Date } {
  let offset = 0;
  server.ctx.now = () => new Date(Date.now() + offset);
  return { advance: (ms) => void (offset += ms), now: () => server.ctx.now() };
}

export function sessionIdOf(checkoutUrl: string): string {
  const m = /\/checkout\/(cs_[A-Za-z0-9_]+)/.exec(checkoutUrl);
  if (!m) throw new Error(`not a checkout URL of the fake: ${checkoutUrl}`);
  return m[1];
}

/** POST /submit, then pay on the fake's checkout with `card`; waits until every webhook was delivered. */
export async function submitAndPay(
  server: TestServer,
  agent: SignedInAgent,
  caseId: string,
  opts: { tier?: string; card?: string } = {},
) {
  const res = await agent
    .post(`/api/cases/${caseId}/submit`)
    .set("Origin", server.url)
    .send({ tier: opts.tier ?? "standard" });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  const sessionId = sessionIdOf(res.body.checkoutUrl);
  const paid = await fetch(`${server.fakeStripe!.url}/_test/checkout/${sessionId}/pay`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ card: opts.card ?? CARDS.ok }),
  });
  const payBody = (await paid.json()) as { ok: boolean; payment_intent: { id: string } | null };
  await server.fakeStripe!.idle();
  return {
    submit: res.body as { checkoutUrl: string; paymentId: string; amountCents: number },
    sessionId,
    pay: payBody,
    paymentIntentId: payBody.payment_intent?.id ?? null,
  };
}

export async function caseRow(server: TestServer, caseId: string) {
  return (await server.ctx.db.read((tx) =>
    tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, caseId)).get(),
  ))!;
}

export async function paymentsOf(server: TestServer, caseId: string) {
  return await server.ctx.db.read((tx) =>
    tx.select().from(schema.payment).where(eq(schema.payment.caseId, caseId)).all(),
  );
}

/** The fake's record of a PaymentIntent (the outside view of the money). */
export function fakeIntent(server: TestServer, id: string) {
  return server.fakeStripe!.state.paymentIntents[id];
}

/**
 * The ledger rule after a scenario: authorised = captured + released + still held, the split adds
 * up, and the holds our ledger calls open are exactly the PaymentIntents the Stripe fake has in
 * `requires_capture` (Stripe API reference, PaymentIntent.status), with the same amounts; captured
 * money equals the fake's amount_received.
 */
export async function expectLedgerBalanced(server: TestServer, caseId: string | "all" = "all"): Promise<LedgerBalance> {
  const b = await server.ctx.db.read((tx) => ledgerBalance(tx, caseId));
  expect(b.problems, b.problems.join("; ")).toEqual([]);
  expect(b.authorizedCents).toBe(b.capturedCents + b.releasedCents + b.heldCents);
  const payments =
    caseId === "all"
      ? await server.ctx.db.read((tx) => tx.select().from(schema.payment).all())
      : await paymentsOf(server, caseId);
  let fakeHeld = 0;
  let fakeCaptured = 0;
  for (const p of payments) {
    if (!p.paymentIntentId) continue;
    const pi = fakeIntent(server, p.paymentIntentId);
    if (!pi) continue;
    if (pi.status === "requires_capture") fakeHeld += pi.amount_capturable;
    fakeCaptured += pi.amount_received;
  }
  expect(b.heldCents, "held in ledger vs requires_capture at Stripe").toBe(fakeHeld);
  expect(b.capturedCents, "captured in ledger vs amount_received at Stripe").toBe(fakeCaptured);
  return b;
}

/** Mails to `email` whose subject matches. */
export function mailsTo(server: TestServer, email: string, subject: RegExp): CaughtMail[] {
  return server.mailCatcher!.messages().filter((m) => m.to.includes(email.toLowerCase()) && subject.test(m.subject));
}

/**
 * Waits until every notification mail the app handed out has been accepted by the catcher, then
 * sends a marker mail and waits for it, so the catcher has parsed everything before it.
 */
export async function flushMail(server: TestServer): Promise<void> {
  await whenMailSent();
  const marker = `flush-${crypto.randomUUID()}@example.test`;
  await server.ctx.mailer.send({ to: marker, subject: "flush", text: "flush" });
  await server.mailCatcher!.waitFor((m) => m.to.includes(marker), 5000);
  await new Promise((r) => setTimeout(r, 50));
}

export type { Stripe };

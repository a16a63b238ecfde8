/**
 * Invitations are not a mail relay (issue 12 item 9): rate-limited per inviting user and per shop,
 * capped per day for shops that are new (younger than 7 days or never paid for a case), with no
 * text chosen by the user in the mail's subject and the body's free text escaped. The limits are
 * this product's own (docs/api.md "Invitations"); RFC 6585 §4 defines 429 with Retry-After;
 * the HTML escaping follows the OWASP XSS Prevention Cheat Sheet (rule 1: encode & < > " ').
 */
import { afterAll, beforeAll, describe, expect, test } from "vitest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { createShopTeam, signIn, waitForMail } from "../factories/index";
import { insertDraftCase, submitAndPay } from "../helpers/queue-flow";
import { schema } from "../../server/db/client";

let s: TestServer;
beforeAll(async () => {
  s = await startTestServer();
});
afterAll(async () => {
  await s?.close();
});

/** Moves ctx.now by `ms` from here on (the limits count invitations by their creation time). */
function moveClock(ms: number) {
  const prev = s.ctx.now;
  s.ctx.now = () => new Date(prev().getTime() + ms);
}

let n = 0;
const addr = () => `invitee-${++n}@example.test`;

describe("invitation limits", () => {
  test("a new shop: 10 per hour per user, then 429; 15 per day, then 429 until the day is over", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const statuses: number[] = [];
    for (let i = 0; i < 11; i++)
      statuses.push((await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: addr() })).status);
    expect(statuses).toEqual([...new Array(10).fill(201), 429]);
    const limited = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: addr() });
    expect(limited.status).toBe(429);
    expect(limited.body.error.code).toBe("invite_limit");
    const hour = Number(limited.headers["retry-after"]);
    expect(hour).toBeGreaterThan(0);
    expect(hour).toBeLessThanOrEqual(3600);

    moveClock(3601_000);
    const more: number[] = [];
    for (let i = 0; i < 6; i++)
      more.push((await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: addr() })).status);
    expect(more).toEqual([201, 201, 201, 201, 201, 429]);
    const daily = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: addr() });
    expect(daily.body.error.code).toBe("invite_limit");
    expect(daily.body.error.details.scope).toBe("shop_day");
    const retry = Number(daily.headers["retry-after"]);
    expect(retry).toBeGreaterThan(3600);
    expect(retry).toBeLessThanOrEqual(24 * 3600);
    // nothing was created or sent for the refused ones
    expect(
      (await s.ctx.db.read((tx) => tx.select().from(schema.invite).where(eq(schema.invite.shopId, team.shop.id)).all()))
        .length,
    ).toBe(15);
  });

  test("an established shop (a week old, has paid for a case) is not held to the new shop's daily cap", async () => {
    const team = await createShopTeam(s, { technicians: 1 });
    await s.ctx.db.write((tx) =>
      tx
        .update(schema.shop)
        .set({ createdAt: new Date(s.ctx.now().getTime() - 30 * 24 * 3600_000) })
        .where(eq(schema.shop.id, team.shop.id))
        .run(),
    );
    const tech = await signIn(s, team.technicians[0]);
    const caseId = await insertDraftCase(s, { shopId: team.shop.id, createdBy: team.technicians[0].id });
    await submitAndPay(s, tech, caseId);
    const owner = await signIn(s, team.owner);
    const statuses: number[] = [];
    for (let hourBlock = 0; hourBlock < 2; hourBlock++) {
      for (let i = 0; i < 10; i++)
        statuses.push((await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: addr() })).status);
      moveClock(3601_000);
    }
    expect(statuses).toEqual(new Array(20).fill(201));
  });
});

describe("invitation mails", () => {
  test("the subject carries no name the user chose; the body quotes them escaped and unlinked", async () => {
    const shopName = `<img src=x onerror=alert(1)> Visit http://cheap-parts.example now`;
    const team = await createShopTeam(s, {
      technicians: 0,
      name: shopName,
      owner: { name: "Win a prize at www.prize.example" },
    });
    const owner = await signIn(s, team.owner);
    const email = addr();
    const since = new Date();
    expect((await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email })).status).toBe(201);
    const mail = await waitForMail(s, email, "invited you", since);
    expect(mail.subject).not.toMatch(/img|cheap|prize|Visit|Win/i);
    // HTML: the markup arrives as text, never as an element
    expect(mail.html).not.toContain("<img src=x");
    expect(mail.html).toContain("&lt;img src=x onerror=alert(1)&gt;");
    // no address the user typed becomes a link in either part
    expect(mail.links.every((l) => !/cheap-parts|prize/.test(l))).toBe(true);
    expect(mail.text).not.toMatch(/https?:\/\/cheap-parts\.example|www\.prize\.example/);
    expect(mail.html).not.toMatch(/https?:\/\/cheap-parts\.example|www\.prize\.example/);
    // the shop is still named, so the invitee knows who invites them
    expect(mail.text).toContain("onerror=alert(1)");
  });
});

import { afterAll, beforeAll, describe, expect, test } from "vitest";
import request from "supertest";
import { count, eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { baseUrl, createShopTeam, createUser, linkParam, nextTestIp, signIn, waitForMail } from "../factories/index";
import { schema } from "../../server/db/client";
import { hashToken } from "../../server/services/shops";

let s: TestServer;
let base: string;
beforeAll(async () => {
  s = await startTestServer();
  base = baseUrl(s);
});
afterAll(async () => {
  await s?.close();
});

async function invite(owner: Awaited<ReturnType<typeof signIn>>, shopId: string, email: string) {
  const since = new Date();
  const res = await owner.post(`/api/shops/${shopId}/invites`).send({ email, name: "New Tech" });
  expect(res.status).toBe(201);
  const mail = await waitForMail(s, email, "invited you", since);
  return { res, mail, token: linkParam(mail, "/accept-invite", "token") };
}

describe("invitations", () => {
  test("invite → mail → accept → the new technician is a verified member of the shop", async () => {
    const team = await createShopTeam(s, { technicians: 0, name: "Lowfield Motors" });
    const owner = await signIn(s, team.owner);
    const email = "joining-tech@example.test";
    // Project rule (issue 2): the owner invites technicians by e-mail; the link accepts them into the shop.
    const { res, mail, token } = await invite(owner, team.shop.id, email);
    expect(res.body.invite).toMatchObject({ email, name: "New Tech" });
    // docs/api.md (POST /api/shops/:shopId/invites) and our mail template (server/auth/mail.ts): the mail names
    // the shop in its body; the subject carries no user-chosen text (issue 12 item 9: invitations as a mail relay).
    expect(mail.subject).not.toContain("Lowfield Motors");
    expect(mail.text).toContain("Lowfield Motors");

    // Only the token's SHA-256 is stored (the link carries the token itself): OWASP Forgot Password
    // Cheat Sheet, store one-time tokens securely; docs/api.md states it for invitations.
    const row = (await s.ctx.db.read((tx) =>
      tx.select().from(schema.invite).where(eq(schema.invite.email, email)).get(),
    ))!;
    expect(row.tokenHash).toBe(hashToken(token));
    expect(row.tokenHash).not.toContain(token);
    // 7 days: our stated lifetime (docs/api.md, INVITE_TTL_DAYS); the length itself is common practice, no source
    expect(row.expiresAt.getTime() - row.createdAt.getTime()).toBe(7 * 24 * 3600 * 1000);

    // docs/api.md (GET /api/shops/:shopId/team): pending invitations are listed for the owner.
    const team1 = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(team1.body.invites.map((i: { email: string }) => i.email)).toEqual([email]);

    // docs/api.md (POST /api/invites/preview): the token shows who is invited where.
    const preview = await request(base).post("/api/invites/preview").send({ token });
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ email, shopName: "Lowfield Motors" });

    const accept = await request(base)
      .post("/api/invites/accept")
      .send({ token, name: "Noor Tate", password: "Joining-the-bay-77" });
    expect(accept.status).toBe(201);
    expect(accept.body.email).toBe(email);

    // The link proved the address: the technician signs in at once (issue 2 requires a verified
    // address before the first sign-in; docs/api.md: "verified by the link").
    const tech = await signIn(s, { email, password: "Joining-the-bay-77" });
    const me = await tech.get("/api/me");
    expect(me.body).toEqual({
      id: expect.any(String),
      email,
      name: "Noor Tate",
      role: "technician",
      shopId: team.shop.id,
    });

    // Project rule (issue 2): invite → accept → member of the shop.
    const team2 = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(team2.body.members.map((m: { email: string; role: string }) => [m.email, m.role])).toEqual([
      [team.owner.email, "owner"],
      [email, "technician"],
    ]);
    expect(team2.body.invites).toEqual([]);
    // abilities computed by the policy (shared/conventions.md: responses carry the computed
    // abilities; docs/api.md: the owner removes technicians only, not the owner)
    expect(team2.body.members.map((m: { abilities: { remove: boolean } }) => m.abilities.remove)).toEqual([
      false,
      true,
    ]);

    // one-time (docs/api.md "one-time link"; OWASP Forgot Password Cheat Sheet: tokens are single
    // use): the same link again is refused and nothing more is created
    const users = (await s.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.user).get()))!.n;
    const reuse = await request(base)
      .post("/api/invites/accept")
      .send({ token, name: "Someone Else", password: "Joining-the-bay-78" });
    expect(reuse.status).toBe(404);
    expect(reuse.body.error.code).toBe("invite_invalid");
    expect((await s.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.user).get()))!.n).toBe(users);
  });

  test("an invitation expires after 7 days", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const { token } = await invite(owner, team.shop.id, "late-tech@example.test");
    // docs/api.md: the link is valid 7 days; one second past that it is refused (404 invite_invalid).
    const realNow = s.ctx.now;
    s.ctx.now = () => new Date(Date.now() + 7 * 24 * 3600 * 1000 + 1000);
    try {
      const res = await request(base)
        .post("/api/invites/accept")
        .send({ token, name: "Late", password: "Too-late-for-this-1" });
      expect(res.status).toBe(404);
      expect(res.body.error.code).toBe("invite_invalid");
    } finally {
      s.ctx.now = realNow;
    }
    expect(
      await s.ctx.db.read((tx) =>
        tx.select().from(schema.user).where(eq(schema.user.email, "late-tech@example.test")).get(),
      ),
    ).toBeUndefined();
  });

  test("a revoked or replaced invitation no longer works", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    // docs/api.md: a new invitation to the same address replaces the old one; DELETE withdraws one.
    const first = await invite(owner, team.shop.id, "replaced@example.test");
    const second = await invite(owner, team.shop.id, "replaced@example.test");
    expect((await request(base).post("/api/invites/preview").send({ token: first.token })).status).toBe(404);
    const del = await owner.delete(`/api/shops/${team.shop.id}/invites/${second.res.body.invite.id}`);
    expect(del.status).toBe(204);
    expect((await request(base).post("/api/invites/preview").send({ token: second.token })).status).toBe(404);
  });

  test("inviting an address that already has an account answers exactly as for a new one; that address is told, with no link to accept", async () => {
    // Changed rule (security review): a 409 here told any owner — and anyone can sign up as one —
    // whether an address is registered. OWASP Authentication Cheat Sheet, "Authentication and
    // Error Messages" / account enumeration: answer the same for registered and unknown addresses.
    const team = await createShopTeam(s, { technicians: 0, name: "Wrenlow Yard" });
    const elsewhere = await createShopTeam(s, { technicians: 1 });
    const owner = await signIn(s, team.owner);
    const expert = await createUser(s, { role: "expert" });
    const otherTech = elsewhere.technicians[0];
    const fresh = "nobody-yet@example.test";

    const since = new Date();
    const answers = [];
    for (const email of [fresh, expert.email, otherTech.email]) {
      const res = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email, name: "New Tech" });
      answers.push(res);
    }
    const shape = (r: request.Response) => ({
      status: r.status,
      keys: Object.keys(r.body).sort(),
      inviteKeys: Object.keys(r.body.invite ?? {}).sort(),
      name: r.body.invite?.name,
      lifetimeMs: Date.parse(r.body.invite?.expiresAt) - Date.parse(r.body.invite?.createdAt),
    });
    expect(shape(answers[0])).toEqual({
      status: 201,
      keys: ["invite"],
      inviteKeys: ["createdAt", "email", "expiresAt", "id", "name"],
      name: "New Tech",
      lifetimeMs: 7 * 24 * 3600 * 1000,
    });
    expect(shape(answers[1])).toEqual(shape(answers[0]));
    expect(shape(answers[2])).toEqual(shape(answers[0]));
    expect(answers.map((r) => r.body.invite.email)).toEqual([fresh, expert.email, otherTech.email]);

    // The team list shows all three as pending, and each can be withdrawn the same way.
    const listed = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(listed.body.invites.map((i: { email: string }) => i.email).sort()).toEqual(
      [fresh, expert.email, otherTech.email].sort(),
    );

    // The new address gets a link to accept; a registered address gets a notice without one
    // (project rule (issue 2): an account belongs to one shop; an invitation must not move it).
    const toFresh = await waitForMail(s, fresh, "invited you", since);
    expect(toFresh.links.some((l) => new URL(l).pathname === "/accept-invite")).toBe(true);
    for (const u of [expert, otherTech]) {
      const notice = await waitForMail(s, u.email, "invited you", since);
      expect(notice.subject).toBe(toFresh.subject);
      expect(notice.text).toContain("already has a Burnline account");
      expect(notice.text).toContain("Wrenlow Yard");
      expect(notice.links.some((l) => new URL(l).pathname.startsWith("/accept-invite"))).toBe(false);
      expect(notice.links.some((l) => /token=/.test(l))).toBe(false);
    }
    // The accounts are as they were.
    const rowOf = async (id: string) =>
      (await s.ctx.db.read((tx) => tx.select().from(schema.user).where(eq(schema.user.id, id)).get()))!;
    expect(await rowOf(expert.id)).toMatchObject({ role: "expert", shopId: null, deactivatedAt: null });
    expect(await rowOf(otherTech.id)).toMatchObject({
      role: "technician",
      shopId: elsewhere.shop.id,
      deactivatedAt: null,
    });
    expect((await (await signIn(s, otherTech)).get("/api/me")).body).toMatchObject({
      role: "technician",
      shopId: elsewhere.shop.id,
    });

    for (const r of answers) {
      expect((await owner.delete(`/api/shops/${team.shop.id}/invites/${r.body.invite.id}`)).status).toBe(204);
    }
    expect((await owner.get(`/api/shops/${team.shop.id}/team`)).body.invites).toEqual([]);
  });

  test("inviting someone already in the owner's own team answers 409 (the owner sees the team anyway) and sends nothing", async () => {
    const team = await createShopTeam(s, { technicians: 1 });
    const owner = await signIn(s, team.owner);
    const member = team.technicians[0];
    const res = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: member.email });
    // RFC 9110 §15.5.10: 409 Conflict, the request conflicts with the current state (already a member).
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("already_in_team");
    expect(res.body.error.details.fields[0].path).toBe("email");
    expect(
      await s.ctx.db.read((tx) => tx.select().from(schema.invite).where(eq(schema.invite.email, member.email)).all()),
    ).toEqual([]);
    expect(s.mailCatcher!.messages().some((m) => m.to.includes(member.email) && /invited you/i.test(m.subject))).toBe(
      false,
    );
  });

  test("an invalid invitation body answers 400 with field details and creates nothing", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    // Project rule (issue 2): schema violations answer 400 with field details and change nothing.
    const res = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: "not an address" });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields).toEqual([{ path: "email", message: expect.any(String) }]);
    expect(
      await s.ctx.db.read((tx) => tx.select().from(schema.invite).where(eq(schema.invite.shopId, team.shop.id)).all()),
    ).toEqual([]);
    const accept = await request(base)
      .post("/api/invites/accept")
      .send({ token: "short", name: "", password: "12345678" });
    expect(accept.status).toBe(400);
    expect(accept.body.error.details.fields.map((f: { path: string }) => f.path).sort()).toEqual([
      "name",
      "password",
      "token",
    ]);
  });
});

describe("removing a technician", () => {
  test("the owner removes a technician: sessions end, live connections are closed, sign-in is refused; a new invitation brings them back", async () => {
    const team = await createShopTeam(s, { technicians: 1 });
    const [techUser] = team.technicians;
    const owner = await signIn(s, team.owner);
    const tech = await signIn(s, techUser);
    expect((await tech.get("/api/me")).status).toBe(200);

    const disconnected: string[] = [];
    const realtime = s.ctx.realtime;
    s.ctx.realtime = { ...realtime, disconnectUser: (id: string) => void disconnected.push(id) };
    try {
      const res = await owner.delete(`/api/shops/${team.shop.id}/members/${techUser.id}`);
      expect(res.status).toBe(204);
    } finally {
      s.ctx.realtime = realtime;
    }
    // Project rule (issue 2: the owner removes technicians; docs/api.md: sessions deleted, live
    // connections closed); OWASP Session Management Cheat Sheet: invalidate sessions server-side.
    expect(disconnected).toEqual([techUser.id]);
    expect(
      await s.ctx.db.read((tx) => tx.select().from(schema.session).where(eq(schema.session.userId, techUser.id)).all()),
    ).toEqual([]);
    expect((await tech.get("/api/me")).status).toBe(401);
    const again = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", nextTestIp())
      .send({ email: techUser.email, password: techUser.password });
    // docs/api.md (sign-in): a removed technician gets 403 account_deactivated.
    expect(again.status).toBe(403);
    expect(again.body.error.code).toBe("account_deactivated");
    const list = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(list.body.members.map((m: { id: string }) => m.id)).toEqual([team.owner.id]);

    // removing twice: the member is gone (RFC 9110 §15.5.5: 404 for a resource that is not there)
    expect((await owner.delete(`/api/shops/${team.shop.id}/members/${techUser.id}`)).status).toBe(404);

    // docs/api.md: a later invitation reactivates the removed account (same id, same shop).
    const { token } = await invite(owner, team.shop.id, techUser.email);
    expect(
      (
        await request(base)
          .post("/api/invites/accept")
          .send({ token, name: techUser.name, password: "Back-in-the-bay-21" })
      ).status,
    ).toBe(201);
    const back = await signIn(s, { email: techUser.email, password: "Back-in-the-bay-21" });
    expect((await back.get("/api/me")).body).toMatchObject({
      id: techUser.id,
      role: "technician",
      shopId: team.shop.id,
    });
  });

  test("the owner cannot remove themselves", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const res = await owner.delete(`/api/shops/${team.shop.id}/members/${team.owner.id}`);
    // docs/api.md: removal is for technicians only, not the owner; issue 2: the wrong target for the
    // role answers 403 (RFC 9110 §15.5.4), and the owner's session stays.
    expect(res.status).toBe(403);
    expect((await owner.get("/api/me")).status).toBe(200);
  });
});

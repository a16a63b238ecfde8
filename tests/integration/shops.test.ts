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
    const { res, mail, token } = await invite(owner, team.shop.id, email);
    expect(res.body.invite).toMatchObject({ email, name: "New Tech" });
    expect(mail.subject).toContain("Lowfield Motors");

    // Only the token's SHA-256 is stored (the link carries the token itself).
    const row = s.ctx.db.select().from(schema.invite).where(eq(schema.invite.email, email)).get()!;
    expect(row.tokenHash).toBe(hashToken(token));
    expect(row.tokenHash).not.toContain(token);
    // 7 days, the and our stated lifetime
    expect(row.expiresAt.getTime() - row.createdAt.getTime()).toBe(7 * 24 * 3600 * 1000);

    const team1 = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(team1.body.invites.map((i: { email: string }) => i.email)).toEqual([email]);

    const preview = await request(base).post("/api/invites/preview").send({ token });
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ email, shopName: "Lowfield Motors" });

    const accept = await request(base).post("/api/invites/accept").send({ token, name: "Noor Tate", password: "Joining-the-bay-77" });
    expect(accept.status).toBe(201);
    expect(accept.body.email).toBe(email);

    // The link proved the address: the technician signs in at once.
    const tech = await signIn(s, { email, password: "Joining-the-bay-77" });
    const me = await tech.get("/api/me");
    expect(me.body).toEqual({ id: expect.any(String), email, name: "Noor Tate", role: "technician", shopId: team.shop.id });

    const team2 = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(team2.body.members.map((m: { email: string; role: string }) => [m.email, m.role])).toEqual([
      [team.owner.email, "owner"],
      [email, "technician"],
    ]);
    expect(team2.body.invites).toEqual([]);
    // abilities computed by the policy: the owner may remove the technician, not themselves
    expect(team2.body.members.map((m: { abilities: { remove: boolean } }) => m.abilities.remove)).toEqual([false, true]);

    // one-time: the same link again is refused and nothing more is created
    const users = s.ctx.db.select({ n: count() }).from(schema.user).get()!.n;
    const reuse = await request(base).post("/api/invites/accept").send({ token, name: "Someone Else", password: "Joining-the-bay-78" });
    expect(reuse.status).toBe(404);
    expect(reuse.body.error.code).toBe("invite_invalid");
    expect(s.ctx.db.select({ n: count() }).from(schema.user).get()!.n).toBe(users);
  });

  test("an invitation expires after 7 days", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const { token } = await invite(owner, team.shop.id, "late-tech@example.test");
    const realNow = s.ctx.now;
    s.ctx.now = () => new Date(Date.now() + 7 * 24 * 3600 * 1000 + 1000);
    try {
      const res = await request(base).post("/api/invites/accept").send({ token, name: "Late", password: "Too-late-for-this-1" });
      expect(res.status).toBe(404);
      expect(res.body.error.code).toBe("invite_invalid");
    } finally {
      s.ctx.now = realNow;
    }
    expect(s.ctx.db.select().from(schema.user).where(eq(schema.user.email, "late-tech@example.test")).get()).toBeUndefined();
  });

  test("a revoked or replaced invitation no longer works", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const first = await invite(owner, team.shop.id, "replaced@example.test");
    const second = await invite(owner, team.shop.id, "replaced@example.test");
    expect((await request(base).post("/api/invites/preview").send({ token: first.token })).status).toBe(404);
    const del = await owner.delete(`/api/shops/${team.shop.id}/invites/${second.res.body.invite.id}`);
    expect(del.status).toBe(204);
    expect((await request(base).post("/api/invites/preview").send({ token: second.token })).status).toBe(404);
  });

  test("inviting an address that already has an account answers 409 and sends nothing", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const other = await createUser(s, { role: "expert" });
    const res = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: other.email });
    expect(res.status).toBe(409);
    expect(res.body.error.details.fields[0].path).toBe("email");
    expect(s.ctx.db.select().from(schema.invite).where(eq(schema.invite.email, other.email)).all()).toEqual([]);
  });

  test("an invalid invitation body answers 400 with field details and creates nothing", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const res = await owner.post(`/api/shops/${team.shop.id}/invites`).send({ email: "not an address" });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields).toEqual([{ path: "email", message: expect.any(String) }]);
    expect(s.ctx.db.select().from(schema.invite).where(eq(schema.invite.shopId, team.shop.id)).all()).toEqual([]);
    const accept = await request(base).post("/api/invites/accept").send({ token: "short", name: "", password: "12345678" });
    expect(accept.status).toBe(400);
    expect(accept.body.error.details.fields.map((f: { path: string }) => f.path).sort()).toEqual(["name", "password", "token"]);
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
    expect(disconnected).toEqual([techUser.id]);
    expect(s.ctx.db.select().from(schema.session).where(eq(schema.session.userId, techUser.id)).all()).toEqual([]);
    expect((await tech.get("/api/me")).status).toBe(401);
    const again = await request(base).post("/api/auth/sign-in/email").set("X-Forwarded-For", nextTestIp()).send({ email: techUser.email, password: techUser.password });
    expect(again.status).toBe(403);
    expect(again.body.error.code).toBe("account_deactivated");
    const list = await owner.get(`/api/shops/${team.shop.id}/team`);
    expect(list.body.members.map((m: { id: string }) => m.id)).toEqual([team.owner.id]);

    // removing twice: the member is gone
    expect((await owner.delete(`/api/shops/${team.shop.id}/members/${techUser.id}`)).status).toBe(404);

    const { token } = await invite(owner, team.shop.id, techUser.email);
    expect((await request(base).post("/api/invites/accept").send({ token, name: techUser.name, password: "Back-in-the-bay-21" })).status).toBe(201);
    const back = await signIn(s, { email: techUser.email, password: "Back-in-the-bay-21" });
    expect((await back.get("/api/me")).body).toMatchObject({ id: techUser.id, role: "technician", shopId: team.shop.id });
  });

  test("the owner cannot remove themselves", async () => {
    const team = await createShopTeam(s, { technicians: 0 });
    const owner = await signIn(s, team.owner);
    const res = await owner.delete(`/api/shops/${team.shop.id}/members/${team.owner.id}`);
    expect(res.status).toBe(403);
    expect((await owner.get("/api/me")).status).toBe(200);
  });
});

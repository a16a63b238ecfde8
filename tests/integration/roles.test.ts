import { afterAll, beforeAll, describe, expect, test } from "vitest";
import request from "supertest";
import { eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import {
  baseUrl,
  createAdmin,
  createExpert,
  createShopTeam,
  linkPath,
  nextTestIp,
  signIn,
  waitForMail,
  type SignedInAgent,
  type ShopTeam,
  type CreatedExpert,
} from "../factories/index";
import { schema } from "../../server/db/client";

// Rule of the issue: another tenant's record answers 404 (its existence is not disclosed), the
// wrong role answers 403 (RFC 9110 §15.5.4: understood but refused; §15.5.5: 404 may hide a
// resource the client may not know about).

let s: TestServer;
let a: ShopTeam;
let b: ShopTeam;
let expert: CreatedExpert;
let pending: CreatedExpert;
const as: Record<"tech" | "owner" | "otherTech" | "otherOwner" | "expert" | "pending" | "admin", SignedInAgent> =
  {} as never;

beforeAll(async () => {
  s = await startTestServer();
  a = await createShopTeam(s, { technicians: 1, name: "Alder Street Garage" });
  b = await createShopTeam(s, { technicians: 1, name: "Birch Lane Motors" });
  expert = await createExpert(s, { systems: ["ignition"], makes: ["Veltra"] });
  pending = await createExpert(s, { status: "pending" });
  const admin = await createAdmin(s);
  as.tech = await signIn(s, a.technicians[0]);
  as.owner = await signIn(s, a.owner);
  as.otherTech = await signIn(s, b.technicians[0]);
  as.otherOwner = await signIn(s, b.owner);
  as.expert = await signIn(s, expert);
  as.pending = await signIn(s, pending);
  as.admin = await signIn(s, admin);
});
afterAll(async () => {
  await s?.close();
});

test("GET /api/me gives each role its id, role and shop (null for experts and admins)", async () => {
  expect((await as.tech.get("/api/me")).body).toMatchObject({ role: "technician", shopId: a.shop.id });
  expect((await as.owner.get("/api/me")).body).toMatchObject({ role: "owner", shopId: a.shop.id });
  expect((await as.expert.get("/api/me")).body).toMatchObject({ id: expert.id, role: "expert", shopId: null });
  expect(Object.keys((await as.admin.get("/api/me")).body).sort()).toEqual(["email", "id", "name", "role", "shopId"]);
  expect((await as.admin.get("/api/me")).body).toMatchObject({ role: "admin", shopId: null });
});

test("a user whose stored role is not one of the known roles is denied everything (treated as signed out)", async () => {
  // Fail closed (OWASP Authorization Cheat Sheet, "Deny by default"): a role value the policies do
  // not know grants no role at all, not the technician's.
  const team = await createShopTeam(s, { technicians: 1 });
  const ag = await signIn(s, team.technicians[0]);
  expect((await ag.get("/api/me")).status).toBe(200);
  await s.ctx.db.write((tx) =>
    tx.update(schema.user).set({ role: "superuser" }).where(eq(schema.user.id, team.technicians[0].id)).run(),
  );
  const me = await ag.get("/api/me");
  expect(me.status).toBe(401);
  expect(me.body.error.code).toBe("unauthenticated");
  const teamList = await ag.get(`/api/shops/${team.shop.id}/team`);
  expect(teamList.status).toBe(401);
  const cases = await ag.get("/api/cases");
  expect(cases.status).toBe(401);
});

describe("each role reaches only its routes", () => {
  type Who = keyof typeof as;
  const cases: {
    name: string;
    run: (ag: SignedInAgent) => Promise<request.Response>;
    expect: Partial<Record<Who | "anon", number>>;
  }[] = [
    {
      name: "GET own shop's team (shop A)",
      run: (ag) => ag.get(`/api/shops/${a.shop.id}/team`),
      expect: { tech: 200, owner: 200, otherTech: 404, otherOwner: 404, expert: 404, pending: 404, admin: 200 },
    },
    {
      name: "GET shop A",
      run: (ag) => ag.get(`/api/shops/${a.shop.id}`),
      expect: { tech: 200, owner: 200, otherTech: 404, otherOwner: 404, expert: 404, admin: 200 },
    },
    {
      name: "POST an invitation into shop A",
      run: (ag) =>
        ag
          .post(`/api/shops/${a.shop.id}/invites`)
          .send({ email: `inv-${Math.random().toString(36).slice(2)}@example.test` }),
      expect: { tech: 403, otherTech: 404, otherOwner: 404, expert: 404, pending: 404, admin: 403 },
    },
    {
      name: "DELETE shop A's technician",
      run: (ag) => ag.delete(`/api/shops/${a.shop.id}/members/${a.technicians[0].id}`),
      expect: { tech: 403, otherTech: 404, otherOwner: 404, expert: 404, admin: 403 },
    },
    {
      name: "DELETE shop B's technician through shop A's address",
      run: (ag) => ag.delete(`/api/shops/${a.shop.id}/members/${b.technicians[0].id}`),
      expect: { owner: 404 },
    },
    {
      name: "GET /api/admin/experts",
      run: (ag) => ag.get("/api/admin/experts"),
      expect: { tech: 403, owner: 403, expert: 403, pending: 403, admin: 200 },
    },
    {
      name: "POST approve an expert",
      run: (ag) => ag.post(`/api/admin/experts/${pending.id}/approve`).send({}),
      expect: { tech: 403, owner: 403, expert: 403, pending: 403 },
    },
    {
      name: "GET /api/experts/me",
      run: (ag) => ag.get("/api/experts/me"),
      expect: { tech: 403, owner: 403, admin: 403, expert: 200, pending: 200 },
    },
    {
      name: "PATCH /api/experts/me availability",
      run: (ag) => ag.patch("/api/experts/me").send({ available: true }),
      expect: { tech: 403, owner: 403, admin: 403, pending: 403, expert: 200 },
    },
  ];

  for (const c of cases) {
    test(c.name, async () => {
      for (const [who, status] of Object.entries(c.expect)) {
        const res = await c.run(as[who as Who]);
        expect(res.status, `${who}: ${JSON.stringify(res.body)}`).toBe(status);
        if (status >= 400) expect(res.body.error.code, who).toBe(status === 404 ? "not_found" : "forbidden");
      }
      const anon = await c.run(request.agent(baseUrl(s)) as SignedInAgent);
      expect(anon.status, "signed out").toBe(401);
    });
  }

  test("the owner's own invitation goes through (the 403s above are about role, not a broken route)", async () => {
    const res = await as.owner.post(`/api/shops/${a.shop.id}/invites`).send({ email: "welcome-tech@example.test" });
    expect(res.status).toBe(201);
  });

  test("responses carry the abilities the policy computed", async () => {
    expect((await as.tech.get(`/api/shops/${a.shop.id}`)).body.abilities).toEqual({
      view: true,
      listMembers: true,
      invite: false,
      removeMember: false,
      manageBilling: false,
    });
    expect((await as.owner.get(`/api/shops/${a.shop.id}`)).body.abilities).toEqual({
      view: true,
      listMembers: true,
      invite: true,
      removeMember: true,
      manageBilling: true,
    });
    expect((await as.pending.get("/api/experts/me")).body.abilities).toMatchObject({
      view: true,
      setAvailability: false,
    });
  });
});

describe("expert application and review", () => {
  test("apply → verify → pending → admin approves → the expert sets themselves available", async () => {
    const email = "applicant@example.test";
    const password = "Scope-and-coil-5150";
    const since = new Date();
    const apply = await request(baseUrl(s))
      .post("/api/experts/apply")
      .set("X-Forwarded-For", nextTestIp())
      .send({
        name: "Ira Vance",
        email,
        password,
        systems: ["ignition", "fuel"],
        makes: ["Korrin", "Astaro"],
        bio: "Fifteen years of ignition and fuel diagnostics on the bench.",
        yearsExperience: 15,
      });
    expect(apply.status).toBe(202);
    await request(baseUrl(s))
      .get(linkPath(await waitForMail(s, email, "confirm", since), "/api/auth/verify-email"))
      .expect(302);

    const list = await as.admin.get("/api/admin/experts?status=pending");
    const entry = list.body.experts.find((e: { email: string }) => e.email === email);
    expect(entry).toMatchObject({
      status: "pending",
      systems: ["ignition", "fuel"],
      makes: ["Korrin", "Astaro"],
      emailVerified: true,
      abilities: { decide: true },
    });

    const applicant = await signIn(s, { email, password });
    expect((await applicant.get("/api/me")).body).toMatchObject({ role: "expert", shopId: null });
    expect((await applicant.patch("/api/experts/me").send({ available: true })).status).toBe(403);

    const decisionSince = new Date();
    const approve = await as.admin.post(`/api/admin/experts/${entry.userId}/approve`).send({ note: "Welcome aboard." });
    expect(approve.status).toBe(200);
    expect(approve.body.profile.status).toBe("approved");
    const mail = await waitForMail(s, email, "approved", decisionSince);
    expect(mail.text).toContain("Welcome aboard.");
    const row = (await s.ctx.db.read((tx) =>
      tx.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, entry.userId)).get(),
    ))!;
    expect(row.decidedBy).not.toBeNull();

    const on = await applicant.patch("/api/experts/me").send({ available: true });
    expect(on.status).toBe(200);
    expect(on.body.profile.available).toBe(true);
    const bad = await applicant.patch("/api/experts/me").send({ available: "yes" });
    expect(bad.status).toBe(400);
    expect(bad.body.error.details.fields[0].path).toBe("available");
  });

  test("the admin rejects an application; deciding on an unknown expert answers 404", async () => {
    const p = await createExpert(s, { status: "pending" });
    const res = await as.admin.post(`/api/admin/experts/${p.id}/reject`).send({});
    expect(res.status).toBe(200);
    expect(res.body.profile).toMatchObject({ status: "rejected", available: false });
    expect((await as.admin.post(`/api/admin/experts/${p.id}/reject`).send({})).status).toBe(409);
    expect((await as.admin.post(`/api/admin/experts/${crypto.randomUUID()}/approve`).send({})).status).toBe(404);
    expect((await as.admin.get("/api/admin/experts?status=bogus")).status).toBe(400);
  });
});

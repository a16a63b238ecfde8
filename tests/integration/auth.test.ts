import { afterAll, beforeAll, describe, expect, test, vi } from "vitest";
import express from "express";
import http from "node:http";
import os from "node:os";
import request from "supertest";
import argon2 from "argon2";
import { count, eq } from "drizzle-orm";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { baseUrl, createUser, linkParam, linkPath, signIn, waitForMail } from "../factories/index";
import { schema } from "../../server/db/client";
import { devMailRoutes } from "../../server/routes/dev-mail";
import { errorHandler } from "../../server/http/error-handler";

let s: TestServer;
let base: string;
const counts = async () => ({
  users: (await s.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.user).get()))!.n,
  shops: (await s.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.shop).get()))!.n,
  accounts: (await s.ctx.db.read((tx) => tx.select({ n: count() }).from(schema.account).get()))!.n,
});
let ipSeq = 0;
/** A fresh client address per scenario, so rate limits of one test do not leak into the next. */
const ip = () => `198.51.100.${++ipSeq}`;

beforeAll(async () => {
  s = await startTestServer();
  base = baseUrl(s);
});
afterAll(async () => {
  await s?.close();
});

describe("sign-up, e-mail verification, sign-in", () => {
  test("a shop owner signs up, the verification mail arrives over SMTP, unverified sign-in is refused, the link verifies, sign-in works", async () => {
    const email = "new-owner@example.test";
    const password = "Coil-ringing-3141";
    const before = await counts();
    const since = new Date();
    const res = await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "Quarry Road Garage", name: "Lee Ashby", email, password });
    expect(res.status).toBe(202);
    expect(await counts()).toEqual({ users: before.users + 1, shops: before.shops + 1, accounts: before.accounts + 1 });

    // The mail went through a real SMTP conversation with the catcher (server/fakes/smtp.ts).
    const mail = await waitForMail(s, email, "confirm", since);
    const verifyPath = linkPath(mail, "/api/auth/verify-email");

    // Requirement of the issue: e-mail verification before the first sign-in.
    const unverified = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email, password });
    expect(unverified.status).toBe(403);
    expect(unverified.body.error.code).toBe("email_not_verified");
    expect(unverified.headers["set-cookie"]).toBeUndefined();

    const verify = await request(base).get(verifyPath);
    expect(verify.status).toBe(302);
    expect(verify.headers.location).toBe("/sign-in?verified=1");

    const agent = request.agent(base);
    const ok = await agent.post("/api/auth/sign-in/email").set("X-Forwarded-For", ip()).send({ email, password });
    expect(ok.status).toBe(200);
    // The session is only in the HttpOnly cookie, never in the JSON a page script could read.
    expect(ok.body.token).toBeUndefined();
    const cookie = ([] as string[]).concat(ok.headers["set-cookie"] ?? []).join("\n");
    // RFC 6265 §4.1.2.6 HttpOnly; RFC 6265bis §4.1.2.7 SameSite=Lax; no Secure outside production.
    expect(cookie).toMatch(/burnline\.session_token=[^;]+;/);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);

    const me = await agent.get("/api/me");
    expect(me.status).toBe(200);
    const shop = (await s.ctx.db.read((tx) =>
      tx.select().from(schema.shop).where(eq(schema.shop.name, "Quarry Road Garage")).get(),
    ))!;
    expect(me.body).toEqual({ id: expect.any(String), email, name: "Lee Ashby", role: "owner", shopId: shop.id });

    const out = await agent.post("/api/auth/sign-out").send({});
    expect(out.status).toBe(200);
    expect((await agent.get("/api/me")).status).toBe(401);
  });

  test("a second sign-up with a registered address answers exactly as the first and changes nothing", async () => {
    const email = "twice@example.test";
    const first = await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "First Garage", name: "A One", email, password: "Burn-plateau-2718" });
    const before = await counts();
    const since = new Date();
    const second = await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "Second Garage", name: "A Two", email, password: "Other-plateau-2718" });
    // OWASP Authentication Cheat Sheet, "Authentication and Error Messages": account creation must
    // not reveal whether an address is registered.
    expect(second.status).toBe(first.status);
    expect(second.body).toEqual(first.body);
    expect(await counts()).toEqual(before);
    const notice = await waitForMail(s, email, "already have", since);
    expect(notice.text).toContain("already has an account");
  });

  test("GET /api/me answers 401 with the error format when signed out", async () => {
    const res = await request(base).get("/api/me");
    expect(res.status).toBe(401);
    expect(res.body).toEqual({ error: { code: "unauthenticated", message: expect.any(String) } });
  });
});

describe("sign-in errors and rate limit", () => {
  test("wrong password and unknown user give the same status and body", async () => {
    const u = await createUser(s, { role: "technician" });
    const wrong = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: "not-the-password-1" });
    const unknown = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: "nobody-here@example.test", password: "not-the-password-1" });
    // OWASP Authentication Cheat Sheet: respond with a generic message whether the user id or the password was wrong.
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(wrong.status);
    expect(unknown.body).toEqual(wrong.body);
    expect(wrong.body.error.code).toBe("invalid_credentials");
  });

  test("the sign-in rate limit trips with 429 after 5 attempts per minute from one address, other addresses unaffected", async () => {
    const u = await createUser(s);
    const attacker = ip();
    const statuses: number[] = [];
    for (let i = 0; i < 5; i++) {
      // a header of our own that a client might try to forge is overwritten by the server
      const r = await request(base)
        .post("/api/auth/sign-in/email")
        .set("X-Forwarded-For", attacker)
        .set("X-Burnline-Client-Ip", `203.0.113.${i}`)
        .send({ email: u.email, password: "guess-guess-" + i });
      statuses.push(r.status);
    }
    expect(statuses).toEqual([401, 401, 401, 401, 401]);
    const blocked = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", attacker)
      .send({ email: u.email, password: u.password });
    // RFC 6585 §4: 429 Too Many Requests, optionally with Retry-After (RFC 9110 §10.2.3, seconds).
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.code).toBe("rate_limited");
    const retry = Number(blocked.headers["retry-after"]);
    expect(retry).toBeGreaterThan(0);
    expect(retry).toBeLessThanOrEqual(60);
    expect(blocked.headers["set-cookie"]).toBeUndefined();

    const elsewhere = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: u.password });
    expect(elsewhere.status).toBe(200);
  });

  test("shop sign-up is rate limited too (5 per 10 minutes per address)", async () => {
    const from = ip();
    const statuses: number[] = [];
    for (let i = 0; i < 6; i++) {
      const r = await request(base)
        .post("/api/shops/sign-up")
        .set("X-Forwarded-For", from)
        .send({ shopName: "x", name: "", email: "bad", password: "short" });
      statuses.push(r.status);
    }
    expect(statuses).toEqual([400, 400, 400, 400, 400, 429]);
  });
});

describe("password reset", () => {
  test("same answer for known and unknown addresses; the link works once; sessions are revoked; the old password stops working", async () => {
    const u = await createUser(s, { role: "owner" });
    const session = await signIn(s, u);
    expect((await session.get("/api/me")).status).toBe(200);

    const since = new Date();
    // better-auth computes the link's expiry from Date.now() (better-auth/dist/utils/date.mjs
    // getDate), not from ctx.now, so the clock the request runs on is fixed here: Date alone is
    // faked (timers stay real) and stands still at `issuedAt` during the request.
    const issuedAt = new Date(Math.ceil(Date.now() / 1000) * 1000 + 1000);
    vi.useFakeTimers({ toFake: ["Date"], now: issuedAt });
    let known: request.Response;
    try {
      known = await request(base)
        .post("/api/auth/request-password-reset")
        .set("X-Forwarded-For", ip())
        .send({ email: u.email });
      // the reset is carried out after the answer (server/auth/auth.ts): the clock stands still
      // until its link is stored (on a libSQL server that is a few round trips later)
      const stored = () =>
        s.ctx.db.read((tx) => tx.select().from(schema.verification).where(eq(schema.verification.value, u.id)).all());
      for (let i = 0; i < 400 && (await stored()).length === 0; i++) await new Promise((r) => setTimeout(r, 25));
    } finally {
      vi.useRealTimers();
    }
    const unknown = await request(base)
      .post("/api/auth/request-password-reset")
      .set("X-Forwarded-For", ip())
      .send({ email: "ghost@example.test" });
    // OWASP Forgot Password Cheat Sheet: "Return a consistent message for both existent and non-existent accounts."
    expect(known.status).toBe(200);
    expect(unknown.status).toBe(known.status);
    expect(unknown.body).toEqual(known.body);

    const mail = await waitForMail(s, u.email, "reset", since);
    const token = linkParam(mail, "/reset-password", "token");
    // The token is stored hashed, not as sent (OWASP Forgot Password Cheat Sheet: store tokens securely).
    const rows = await s.ctx.db.read((tx) =>
      tx.select().from(schema.verification).where(eq(schema.verification.value, u.id)).all(),
    );
    expect(rows.length).toBe(1);
    expect(rows[0].identifier).not.toContain(token);
    // ... and expires exactly 1 hour after it was issued (requirement of the issue).
    expect(rows[0].expiresAt.getTime()).toBe(issuedAt.getTime() + 3600_000);

    const common = await request(base)
      .post("/api/auth/reset-password")
      .set("X-Forwarded-For", ip())
      .send({ token, newPassword: "password123" });
    // NIST SP 800-63B §5.1.1.2: refuse passwords found in lists of commonly used values.
    expect(common.status).toBe(400);
    expect(common.body.error.details.fields).toEqual([
      { path: "newPassword", message: expect.stringMatching(/common/) },
    ]);

    const newPassword = "Fresh-firing-line-88";
    const reset = await request(base)
      .post("/api/auth/reset-password")
      .set("X-Forwarded-For", ip())
      .send({ token, newPassword });
    expect(reset.status).toBe(200);
    // OWASP Forgot Password Cheat Sheet: tokens are single use.
    const again = await request(base)
      .post("/api/auth/reset-password")
      .set("X-Forwarded-For", ip())
      .send({ token, newPassword: "Another-firing-line-88" });
    expect(again.status).toBe(400);
    expect(again.body.error.code).toBe("invalid_token");

    // Sessions revoked on reset (requirement of the issue; OWASP Session Management Cheat Sheet).
    expect((await session.get("/api/me")).status).toBe(401);
    const old = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: u.password });
    expect(old.status).toBe(401);
    const fresh = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: newPassword });
    expect(fresh.status).toBe(200);
  });

  test("an expired reset link is refused", async () => {
    const u = await createUser(s);
    const since = new Date();
    await request(base)
      .post("/api/auth/request-password-reset")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email })
      .expect(200);
    const token = linkParam(await waitForMail(s, u.email, "reset", since), "/reset-password", "token");
    // Move the stored expiry just past now (the same as waiting out the hour).
    await s.ctx.db.write((tx) =>
      tx
        .update(schema.verification)
        .set({ expiresAt: new Date(Date.now() - 1000) })
        .where(eq(schema.verification.value, u.id))
        .run(),
    );
    const res = await request(base)
      .post("/api/auth/reset-password")
      .set("X-Forwarded-For", ip())
      .send({ token, newPassword: "Late-but-long-enough-1" });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("invalid_token");
    const still = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: u.password });
    expect(still.status).toBe(200);
  });
});

describe("cross-site requests", () => {
  test("a foreign Origin is refused on better-auth's endpoints and on ours, and nothing is created", async () => {
    const u = await createUser(s);
    const before = await counts();
    // OWASP CSRF Prevention Cheat Sheet, "Verifying Origin With Standard Headers" and "Fetch Metadata".
    const signInRes = await request(base)
      .post("/api/auth/sign-in/email")
      .set("Origin", "https://evil.example")
      .send({ email: u.email, password: u.password });
    expect(signInRes.status).toBe(403);
    expect(signInRes.body.error.code).toBe("cross_site");
    expect(signInRes.headers["set-cookie"]).toBeUndefined();

    const signUp = await request(base)
      .post("/api/shops/sign-up")
      .set("Origin", "https://evil.example")
      .send({ shopName: "Evil Garage", name: "E", email: "evil@example.test", password: "Cross-site-attempt-1" });
    expect(signUp.status).toBe(403);
    const fetchMeta = await request(base)
      .post("/api/shops/sign-up")
      .set("Sec-Fetch-Site", "cross-site")
      .send({ shopName: "Evil Garage", name: "E", email: "evil@example.test", password: "Cross-site-attempt-1" });
    expect(fetchMeta.status).toBe(403);
    expect(await counts()).toEqual(before);

    // the app's own origin passes the guard
    const same = await request(base)
      .post("/api/auth/sign-in/email")
      .set("Origin", s.ctx.env.publicUrl)
      .set("X-Forwarded-For", ip())
      .send({ email: u.email, password: u.password });
    expect(same.status).toBe(200);
  });
});

describe("malformed input", () => {
  test("malformed JSON answers 400 and changes nothing", async () => {
    const before = await counts();
    for (const path of ["/api/shops/sign-up", "/api/auth/sign-in/email", "/api/experts/apply"]) {
      const res = await request(base)
        .post(path)
        .set("X-Forwarded-For", ip())
        .set("Content-Type", "application/json")
        .send('{"shopName": "x", ');
      expect(res.status, path).toBe(400);
      expect(res.body.error.code, path).toBe("malformed_json");
    }
    expect(await counts()).toEqual(before);
  });

  test("schema violations answer 400 with field details and change nothing", async () => {
    const before = await counts();
    const res = await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "", name: "Someone", email: "not-an-address", password: "x".repeat(129) });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    const paths = res.body.error.details.fields.map((f: { path: string }) => f.path).sort();
    expect(paths).toEqual(["email", "password", "shopName"]);
    for (const f of res.body.error.details.fields) expect(f.message.length).toBeGreaterThan(5);

    const common = await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "Valid Name", name: "Someone", email: "valid@example.test", password: "password1" });
    expect(common.status).toBe(400);
    expect(common.body.error.details.fields).toEqual([{ path: "password", message: expect.stringMatching(/common/) }]);

    const signInRes = await request(base)
      .post("/api/auth/sign-in/email")
      .set("X-Forwarded-For", ip())
      .send({ email: "nope" });
    expect(signInRes.status).toBe(400);
    expect(signInRes.body.error.details.fields.map((f: { path: string }) => f.path).sort()).toEqual([
      "email",
      "password",
    ]);

    const expert = await request(base)
      .post("/api/experts/apply")
      .set("X-Forwarded-For", ip())
      .send({
        name: "X",
        email: "x@example.test",
        password: "Long-enough-pass-1",
        systems: ["teleportation"],
        makes: [],
        bio: "short",
      });
    expect(expert.status).toBe(400);
    expect(expert.body.error.details.fields.map((f: { path: string }) => f.path).sort()).toEqual(["bio", "systems.0"]);
    expect(await counts()).toEqual(before);
  });
});

describe("password storage", () => {
  test("a stored hash is argon2id with m = 19456 KiB, t = 2, p = 1 and verifies with the reference library", async () => {
    const email = "hash-check@example.test";
    const password = "Secondary-ignition-kV-40";
    await request(base)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", ip())
      .send({ shopName: "Hash Garage", name: "H", email, password })
      .expect(202);
    const user = (await s.ctx.db.read((tx) =>
      tx.select().from(schema.user).where(eq(schema.user.email, email)).get(),
    ))!;
    const acct = (await s.ctx.db.read((tx) =>
      tx.select().from(schema.account).where(eq(schema.account.userId, user.id)).get(),
    ))!;
    // PHC string format (github.com/P-H-C/phc-string-format): $argon2id$v=19$<k=v,...>$salt$hash;
    // the parameter order is not fixed by the format, so parse them as a map.
    const m = /^\$argon2id\$v=(\d+)\$([a-z]=\d+(?:,[a-z]=\d+)*)\$([A-Za-z0-9+/]+)\$([A-Za-z0-9+/]+)$/.exec(
      acct.password!,
    );
    expect(m).not.toBeNull();
    const params = Object.fromEntries(
      m![2]
        .split(",")
        .map((kv) => kv.split("="))
        .map(([k, v]) => [k, Number(v)]),
    );
    expect(Number(m![1])).toBe(19); // RFC 9106 §3.1: version number 0x13
    // OWASP Password Storage Cheat Sheet: argon2id, minimum m=19456 (19 MiB), t=2, p=1.
    expect(params.m).toBeGreaterThanOrEqual(19456);
    expect(params.t).toBeGreaterThanOrEqual(2);
    expect(params.p).toBeGreaterThanOrEqual(1);
    expect(await argon2.verify(acct.password!, password)).toBe(true);
    expect(await argon2.verify(acct.password!, password + "x")).toBe(false);
  });
});

describe("development inbox", () => {
  test("GET /api/dev/mail lists caught mails with links and /dev/mail shows them as a page", async () => {
    const u = await createUser(s);
    const since = new Date();
    await request(base)
      .post("/api/auth/request-password-reset")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email })
      .expect(200);
    const mail = await waitForMail(s, u.email, "reset", since);
    const list = await request(base).get("/api/dev/mail");
    expect(list.status).toBe(200);
    const listed = list.body.mails.find((m: { id: string }) => m.id === mail.id);
    expect(listed.links.some((l: string) => l.includes("/reset-password?token="))).toBe(true);
    const page = await request(base).get("/dev/mail");
    expect(page.status).toBe(200);
    expect(page.headers["content-type"]).toMatch(/text\/html/);
    expect(page.text).toContain(`href="${mail.links[0].replace(/&/g, "&amp;")}"`);
    const cfg = await request(base).get("/api/config");
    expect(cfg.body).toMatchObject({ devMail: true, demo: false, demoSignIns: [] });
  });
});

describe("session token stays in the cookie", () => {
  test("get-session and list-sessions answer without the session token; the cookie still signs the requests", async () => {
    const u = await createUser(s);
    const agent = await signIn(s, u);
    // better-auth's cookie value is "<token>.<signature>", URL-encoded.
    const cookieValue = /burnline\.session_token=([^;]+)/.exec(agent.cookie)![1];
    const token = decodeURIComponent(cookieValue).split(".")[0];
    expect(token.length).toBeGreaterThan(16);

    // OWASP Session Management Cheat Sheet, "Cookies" / HttpOnly: the session ID must not be
    // readable by page scripts; project rule (the session lives only in the HttpOnly cookie).
    const got = await agent.get("/api/auth/get-session");
    expect(got.status).toBe(200);
    expect(got.body.user.email).toBe(u.email);
    expect(got.body.session.userId).toBe(u.id);
    expect(got.body.session).not.toHaveProperty("token");
    expect(got.text).not.toContain(token);

    const list = await agent.get("/api/auth/list-sessions");
    expect(list.status).toBe(200);
    expect(Array.isArray(list.body)).toBe(true);
    expect(list.body.length).toBeGreaterThanOrEqual(1);
    for (const entry of list.body) expect(entry).not.toHaveProperty("token");
    expect(list.text).not.toContain(token);

    // the cookie is untouched and still the session
    const me = await agent.get("/api/me");
    expect(me.status).toBe(200);
    expect(me.body.id).toBe(u.id);
  });
});

describe("development inbox is for this machine only", () => {
  const paths = ["/api/dev/mail", "/dev/mail"];

  /** The real inbox router and error handler behind a socket whose peer address is `peer`. */
  function appSeenFrom(peer: string) {
    const app = express();
    app.use((req, _res, next) => {
      Object.defineProperty(req.socket, "remoteAddress", { value: peer, configurable: true });
      next();
    });
    app.use(devMailRoutes(s.ctx));
    app.use((_req, res) => void res.status(418).json({ fellThrough: true }));
    app.use(errorHandler);
    return app;
  }

  test("a client on another machine gets 404 with the error format, as for a path that does not exist", async () => {
    const u = await createUser(s);
    const since = new Date();
    await request(base)
      .post("/api/auth/request-password-reset")
      .set("X-Forwarded-For", ip())
      .send({ email: u.email })
      .expect(200);
    const mail = await waitForMail(s, u.email, "reset", since);
    // 192.168.1.20: an RFC 1918 private address, i.e. a machine on the same LAN.
    const lan = appSeenFrom("192.168.1.20");
    for (const p of [...paths, `/dev/mail/${mail.id}`]) {
      const res = await request(lan).get(p);
      expect(res.status, p).toBe(404);
      expect(res.body, p).toEqual({ error: { code: "not_found", message: expect.any(String) } });
      expect(res.text, p).not.toContain("/reset-password?token=");
    }
    // the three loopback forms pass (RFC 1122 §3.2.1.3 127/8; RFC 4291 §2.5.3 ::1; §2.5.5.2 IPv4-mapped)
    for (const peer of ["127.0.0.1", "::1", "::ffff:127.0.0.1"]) {
      const res = await request(appSeenFrom(peer)).get("/api/dev/mail");
      expect(res.status, peer).toBe(200);
      expect(
        res.body.mails.some((m: { id: string }) => m.id === mail.id),
        peer,
      ).toBe(true);
    }
  });

  test("a request relayed by a local proxy for another machine gets 404", async () => {
    for (const [header, value] of [
      ["X-Forwarded-For", "192.168.1.20"],
      ["X-Forwarded-For", "127.0.0.1, 192.168.1.20"],
      ["Forwarded", 'for="[fd00::20]:4711"'], // RFC 7239 §4 syntax
      ["X-Real-IP", "192.168.1.20"],
    ]) {
      for (const p of paths) {
        const res = await request(base).get(p).set(header, value);
        expect(res.status, `${header}: ${value} ${p}`).toBe(404);
        expect(res.body.error.code).toBe("not_found");
      }
    }
    // a proxy on this machine relaying for this machine still passes
    expect((await request(base).get("/api/dev/mail").set("X-Forwarded-For", "127.0.0.1")).status).toBe(200);
  });

  const lanAddress = Object.values(os.networkInterfaces())
    .flat()
    .find((i) => i && i.family === "IPv4" && !i.internal)?.address;
  test.skipIf(!lanAddress)(
    "over a real connection from this machine's network address (not loopback) the inbox answers 404",
    async () => {
      const open = await startTestServer({ HOST: "0.0.0.0" });
      try {
        const get = (p: string) =>
          new Promise<{ status: number; body: string }>((resolve, reject) => {
            http
              .get({ host: lanAddress, port: open.port, path: p, localAddress: lanAddress }, (res) => {
                let body = "";
                res.setEncoding("utf8");
                res.on("data", (c) => (body += c));
                res.on("end", () => resolve({ status: res.statusCode ?? 0, body }));
              })
              .on("error", reject);
          });
        for (const p of paths) {
          const res = await get(p);
          expect(res.status, p).toBe(404);
          expect(JSON.parse(res.body).error.code).toBe("not_found");
        }
        // the same server answers its own machine over loopback
        expect((await request(baseUrl(open)).get("/api/dev/mail")).status).toBe(200);
      } finally {
        await open.close();
      }
    },
  );

  test("a mail shown as sent is sandboxed, so script in it cannot run on the app's origin", async () => {
    const to = "sandbox-check@example.test";
    const since = new Date();
    await s.ctx.mailer.send({
      to,
      subject: "Script inside",
      text: "plain part",
      html: '<p>hello</p><script>fetch("/api/me")</script>',
    });
    const mail = await waitForMail(s, to, "script inside", since);
    const res = await request(base).get(`/dev/mail/${mail.id}`);
    expect(res.status).toBe(200);
    // CSP Level 3 §6.3.2 "sandbox": with no allow-scripts token, scripts do not run and the
    // document gets an opaque origin (HTML Standard, sandboxed origin browsing context flag).
    const csp = String(res.headers["content-security-policy"]);
    const directives = csp.split(";").map((d) => d.trim().split(/\s+/));
    const sandbox = directives.find((d) => d[0] === "sandbox");
    expect(sandbox).toBeDefined();
    expect(sandbox).not.toContain("allow-scripts");
    expect(sandbox).not.toContain("allow-same-origin");
    expect(directives.find((d) => d[0] === "default-src")).toEqual(["default-src", "'none'"]);
  });
});

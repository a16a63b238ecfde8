import { afterAll, beforeAll, expect, test } from "vitest";
import request from "supertest";
import { startTestServer, type TestServer } from "../helpers/test-app";
import { baseUrl, createUser, nextTestIp } from "../factories/index";

let s: TestServer;
beforeAll(async () => {
  s = await startTestServer({
    NODE_ENV: "production",
    AUTH_SECRET: "production-like-test-secret-0123456789abcdef",
    STRIPE_SECRET_KEY: "sk_test_production_like_key",
    STRIPE_WEBHOOK_SECRET: "whsec_production_like_secret",
  });
});
afterAll(async () => {
  await s?.close();
});

test("in production the session cookie is Secure, HttpOnly, SameSite=Lax and carries the __Secure- prefix", async () => {
  const u = await createUser(s);
  const res = await request(baseUrl(s))
    .post("/api/auth/sign-in/email")
    .set("X-Forwarded-For", nextTestIp())
    .send({ email: u.email, password: u.password });
  expect(res.status).toBe(200);
  const cookies: string[] = ([] as string[]).concat(res.headers["set-cookie"] ?? []);
  const session = cookies.find((c) => c.includes("session_token="));
  expect(session).toBeDefined();
  // RFC 6265bis §4.1.3.1: a "__Secure-" cookie must be set with the Secure attribute.
  expect(session!.startsWith("__Secure-burnline.session_token=")).toBe(true);
  expect(session).toMatch(/;\s*Secure/i);
  expect(session).toMatch(/;\s*HttpOnly/i);
  expect(session).toMatch(/;\s*SameSite=Lax/i);
  const me = await request(baseUrl(s)).get("/api/me").set("Cookie", session!.split(";")[0]);
  expect(me.status).toBe(200);
  expect(me.body.email).toBe(u.email);
});

test("the development inbox does not exist in production", async () => {
  // Project rule: the inbox is a development tool; in production its paths answer 404 in the API's
  // error format, even to this machine and even with a client build whose catch-all serves pages.
  for (const p of ["/api/dev/mail", "/dev/mail", "/dev/mail/some-id"]) {
    const res = await request(baseUrl(s)).get(p);
    expect(res.status, p).toBe(404);
    expect(res.headers["content-type"], p).toMatch(/application\/json/);
    expect(res.body, p).toEqual({ error: { code: "not_found", message: expect.any(String) } });
  }
  const cfg = await request(baseUrl(s)).get("/api/config");
  expect(cfg.body.devMail).toBe(false);
});

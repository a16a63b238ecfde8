import { describe, expect, test } from "vitest";
import { loadEnv } from "../../../server/env";
import { redactUrl } from "../../../server/app";

// Project rules (issue 2 and the security review): defaults work on a fresh machine; production
// refuses every default secret and the demo accounts, whose password is published in the README.
describe("configuration", () => {
  test("a fresh machine gets working defaults", () => {
    const env = loadEnv({});
    expect(env.PORT).toBe(3000);
    expect(env.DATABASE_URL).toBe("data/burnline.db");
    expect(env.DEMO).toBe(true);
    expect(env.publicUrl).toBe("http://localhost:3000");
    expect(env.secureCookies).toBe(false);
  });

  test("PORT and DATABASE_URL override the defaults", () => {
    const env = loadEnv({ PORT: "4100", DATABASE_URL: "/tmp/x.db" });
    expect(env.PORT).toBe(4100);
    expect(env.DATABASE_URL).toBe("/tmp/x.db");
    expect(env.publicUrl).toBe("http://localhost:4100");
  });

  test("production refuses the development secrets and names each variable", () => {
    expect(() => loadEnv({ NODE_ENV: "production" })).toThrowError(
      /AUTH_SECRET[\s\S]*STRIPE_WEBHOOK_SECRET[\s\S]*STRIPE_SECRET_KEY/,
    );
  });

  test("production turns the demo off by default and refuses it when asked", () => {
    const own = {
      NODE_ENV: "production",
      AUTH_SECRET: "a-production-secret-of-forty-characters-xx",
      STRIPE_SECRET_KEY: "sk_test_someone_elses_key",
      STRIPE_WEBHOOK_SECRET: "whsec_someone_elses_secret",
      PUBLIC_URL: "https://desk.example.test",
    };
    const env = loadEnv(own);
    expect(env.DEMO).toBe(false);
    expect(env.secureCookies).toBe(true);
    expect(() => loadEnv({ ...own, DEMO: "true" })).toThrowError(/DEMO/);
  });

  test("a malformed value is refused with its name", () => {
    expect(() => loadEnv({ PORT: "eighty" })).toThrowError(/PORT/);
  });
});

describe("request logs", () => {
  test("tokens in query strings are redacted", () => {
    expect(redactUrl("/api/auth/verify-email?token=abc.def&callbackURL=/x")).toBe(
      "/api/auth/verify-email?token=[redacted]&callbackURL=[redacted]",
    );
    expect(redactUrl("/accept-invite?x=1&token=zzz")).toBe("/accept-invite?x=1&token=[redacted]");
    expect(redactUrl("/api/cases?page=2")).toBe("/api/cases?page=2");
  });
});

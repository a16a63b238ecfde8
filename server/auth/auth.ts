import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import * as schema from "../db/schema/index";
import type { AppContext } from "../context";
import { hashPassword, verifyPassword } from "./password";

export function createAuth(ctx: AppContext) {
  const { env } = ctx;
  return betterAuth({
    appName: "Burnline",
    baseURL: env.publicUrl,
    basePath: "/api/auth",
    secret: env.AUTH_SECRET,
    database: drizzleAdapter(ctx.db, {
      provider: "sqlite",
      schema: { user: schema.user, session: schema.session, account: schema.account, verification: schema.verification, rateLimit: schema.rateLimit },
    }),
    emailAndPassword: {
      enabled: true,
      minPasswordLength: 8,
      maxPasswordLength: 128,
      password: { hash: hashPassword, verify: verifyPassword },
    },
    user: {
      additionalFields: {
        role: { type: "string", required: false, defaultValue: "technician", input: false },
        shopId: { type: "string", required: false, input: false },
        color: { type: "string", required: false, input: false },
      },
    },
    advanced: {
      cookiePrefix: "burnline",
      useSecureCookies: env.secureCookies,
      database: { generateId: () => crypto.randomUUID() },
    },
  });
}

export type Auth = ReturnType<typeof createAuth>;

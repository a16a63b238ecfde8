import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import { APIError, createEmailVerificationToken } from "better-auth/api";
import { eq } from "drizzle-orm";
import type { z } from "zod";
import * as schema from "../db/schema/index";
import type { AppContext } from "../context";
import { zodIssues } from "../http/validate";
import {
  changePasswordSchema,
  requestPasswordResetSchema,
  resendVerificationSchema,
  resetPasswordSchema,
  signInSchema,
} from "../../shared/schemas/auth";
import { hashPassword, verifyPassword } from "./password";
import { CLIENT_IP_HEADER } from "./client-ip";
import { mails, sendMail } from "./mail";

export const AUTH_BASE_PATH = "/api/auth";
/** seconds; the verification link in the sign-up mail */
export const EMAIL_VERIFICATION_TTL_S = 24 * 3600;
/** seconds; the one-time password reset link */
export const RESET_PASSWORD_TTL_S = 3600;

/**
 * Rate limits of better-auth's endpoints (per client address, stored in the rate_limit table),
 * on in every environment including tests. Our own account routes use server/auth/rate-limit.ts.
 */
export const AUTH_RATE_RULES = {
  "/sign-in/email": { window: 60, max: 5 },
  "/sign-up/email": { window: 600, max: 5 },
  "/request-password-reset": { window: 300, max: 3 },
  "/forget-password": { window: 300, max: 3 },
  "/reset-password": { window: 300, max: 10 },
  "/send-verification-email": { window: 300, max: 3 },
  "/change-password": { window: 300, max: 5 },
} as const;

/** Request bodies of better-auth endpoints checked with our shared schemas before better-auth sees them. */
const BODY_SCHEMAS: Record<string, z.ZodType> = {
  "/sign-in/email": signInSchema,
  "/request-password-reset": requestPasswordResetSchema,
  "/forget-password": requestPasswordResetSchema,
  "/reset-password": resetPasswordSchema,
  "/change-password": changePasswordSchema,
  "/send-verification-email": resendVerificationSchema,
};

export function createAuth(ctx: AppContext) {
  const { env } = ctx;
  const secure = env.NODE_ENV === "production" || env.secureCookies;
  const auth = betterAuth({
    appName: "Burnline",
    baseURL: env.publicUrl,
    basePath: AUTH_BASE_PATH,
    secret: env.AUTH_SECRET,
    trustedOrigins: trustedOrigins(ctx),
    database: drizzleAdapter(ctx.db, {
      provider: "sqlite",
      schema: { user: schema.user, session: schema.session, account: schema.account, verification: schema.verification, rateLimit: schema.rateLimit },
    }),
    emailAndPassword: {
      enabled: true,
      // Accounts are created by our own routes (shop sign-up, expert application, invitation):
      // each needs its shop or profile in the same transaction. See server/services/accounts.ts.
      disableSignUp: true,
      requireEmailVerification: true,
      minPasswordLength: 8,
      maxPasswordLength: 128,
      password: { hash: hashPassword, verify: verifyPassword },
      resetPasswordTokenExpiresIn: RESET_PASSWORD_TTL_S,
      revokeSessionsOnPasswordReset: true,
      sendResetPassword: async ({ user, token }) => {
        const url = `${env.publicUrl}/reset-password?token=${encodeURIComponent(token)}`;
        await sendMail(ctx, user.email, mails.resetPassword(user.name, url));
      },
      onPasswordReset: async ({ user }) => {
        ctx.realtime.disconnectUser(user.id);
      },
    },
    emailVerification: {
      sendOnSignIn: true,
      autoSignInAfterVerification: false,
      expiresIn: EMAIL_VERIFICATION_TTL_S,
      sendVerificationEmail: async ({ user, url }) => {
        await sendMail(ctx, user.email, mails.verifyEmail(user.name, url));
      },
    },
    user: {
      additionalFields: {
        role: { type: "string", required: false, defaultValue: "technician", input: false },
        shopId: { type: "string", required: false, input: false },
        color: { type: "string", required: false, input: false },
        deactivatedAt: { type: "date", required: false, input: false },
      },
    },
    verification: { storeIdentifier: "hashed" },
    rateLimit: {
      enabled: true,
      storage: "database",
      window: 60,
      max: 100,
      customRules: { ...AUTH_RATE_RULES },
    },
    databaseHooks: {
      session: {
        create: {
          before: async (session) => {
            const u = ctx.db.select({ deactivatedAt: schema.user.deactivatedAt }).from(schema.user).where(eq(schema.user.id, session.userId)).get();
            if (!u || u.deactivatedAt) {
              throw new APIError("FORBIDDEN", { code: "ACCOUNT_DEACTIVATED", message: "This account has been removed from its shop. Ask the shop's owner for a new invitation." });
            }
          },
        },
      },
    },
    advanced: {
      cookiePrefix: "burnline",
      useSecureCookies: secure,
      defaultCookieAttributes: { httpOnly: true, sameSite: "lax", secure },
      ipAddress: { ipAddressHeaders: [CLIENT_IP_HEADER] },
      database: { generateId: () => crypto.randomUUID() },
    },
    logger: { disabled: env.NODE_ENV === "test" || env.LOG_LEVEL === "silent" },
  });

  const handler = auth.handler;
  auth.handler = async (request: Request) => {
    const res = await validateFirst(request, handler);
    return res.status >= 400 ? withOurErrors(res) : withoutSessionToken(request, res);
  };
  return auth;
}

export type Auth = ReturnType<typeof createAuth>;

function trustedOrigins(ctx: AppContext): string[] {
  const list = new Set<string>([new URL(ctx.env.publicUrl).origin]);
  if (ctx.env.NODE_ENV !== "production") {
    list.add(`http://localhost:${ctx.env.PORT}`);
    list.add(`http://127.0.0.1:${ctx.env.PORT}`);
    list.add("http://localhost:5173");
  }
  return [...list];
}

/** A verification link for an account our own routes created (same token better-auth's /verify-email checks). */
export async function verificationUrl(ctx: AppContext, user: { id: string; email: string }, callbackPath = "/sign-in?verified=1"): Promise<string> {
  const token = await createEmailVerificationToken(ctx.env.AUTH_SECRET, user.email, undefined, EMAIL_VERIFICATION_TTL_S, { userId: user.id });
  return `${ctx.env.publicUrl}${AUTH_BASE_PATH}/verify-email?token=${token}&callbackURL=${encodeURIComponent(callbackPath)}`;
}

function jsonError(status: number, code: string, message: string, details?: unknown, headers?: Headers): Response {
  const h = new Headers(headers);
  h.set("content-type", "application/json; charset=utf-8");
  h.delete("content-length");
  return new Response(JSON.stringify({ error: { code, message, ...(details !== undefined ? { details } : {}) } }), { status, headers: h });
}

/** Our schemas (field messages, common-password refusal on reset/change) run before better-auth's own checks. */
async function validateFirst(request: Request, handler: (r: Request) => Promise<Response>): Promise<Response> {
  if (request.method !== "POST") return handler(request);
  const path = new URL(request.url).pathname.slice(AUTH_BASE_PATH.length);
  const schemaFor = BODY_SCHEMAS[path];
  if (!schemaFor) return handler(request);
  const type = request.headers.get("content-type") ?? "";
  if (!type.toLowerCase().startsWith("application/json")) {
    return jsonError(415, "unsupported_type", "Send the request body as JSON (Content-Type: application/json).");
  }
  let body: unknown;
  try {
    const text = await request.text();
    body = text ? JSON.parse(text) : {};
  } catch {
    return jsonError(400, "malformed_json", "The request body is not valid JSON.");
  }
  const parsed = schemaFor.safeParse(body);
  if (!parsed.success) {
    const fields = zodIssues(parsed.error);
    const first = fields[0];
    return jsonError(400, "validation_failed", `Check the request body: ${first ? `${first.path ? first.path + ": " : ""}${first.message}` : "invalid input"}`, { fields });
  }
  const headers = new Headers(request.headers);
  headers.delete("content-length");
  return handler(new Request(request.url, { method: "POST", headers, body: JSON.stringify(parsed.data) }));
}

const MESSAGES: Record<string, [code: string, message: string]> = {
  INVALID_EMAIL_OR_PASSWORD: ["invalid_credentials", "The e-mail address or the password is wrong. Check both, or reset your password."],
  EMAIL_NOT_VERIFIED: ["email_not_verified", "Confirm your e-mail address first: open the link in the mail we sent you. We have just sent a new one."],
  INVALID_TOKEN: ["invalid_token", "This link is not valid any more: it has been used or has expired. Ask for a new one."],
  TOKEN_EXPIRED: ["invalid_token", "This link has expired. Ask for a new one."],
  ACCOUNT_DEACTIVATED: ["account_deactivated", "This account has been removed from its shop. Ask the shop's owner for a new invitation."],
  EMAIL_PASSWORD_SIGN_UP_DISABLED: ["not_found", "Sign up a shop at /api/shops/sign-up or apply as an expert at /api/experts/apply."],
  INVALID_PASSWORD: ["invalid_password", "The current password is wrong."],
};

/**
 * The session lives in an HttpOnly cookie. better-auth also echoes the session token in JSON: at
 * the top of a sign-in or change-password answer, as `session.token` in get-session and as `token`
 * of every entry of list-sessions. Page scripts could read it there (and an XSS could carry it
 * off), so every successful JSON answer of the auth handler goes out without those fields; the
 * cookie is left as it is.
 */
export async function withoutSessionToken(_request: Request, res: Response): Promise<Response> {
  if (!(res.headers.get("content-type") ?? "").includes("json")) return res;
  const text = await res.clone().text();
  let body: unknown;
  try {
    body = text ? JSON.parse(text) : null;
  } catch {
    return res;
  }
  if (!stripSessionTokens(body)) return res;
  const headers = new Headers(res.headers);
  headers.delete("content-length");
  return new Response(JSON.stringify(body), { status: res.status, statusText: res.statusText, headers });
}

/** Removes `token` from the body, from its `session` and from each entry of a list; true if anything was removed. */
export function stripSessionTokens(body: unknown): boolean {
  let changed = false;
  const drop = (o: unknown) => {
    if (o && typeof o === "object" && !Array.isArray(o) && "token" in o) {
      delete (o as Record<string, unknown>).token;
      changed = true;
    }
  };
  if (Array.isArray(body)) body.forEach(drop);
  else if (body && typeof body === "object") {
    drop(body);
    drop((body as Record<string, unknown>).session);
  }
  return changed;
}

/** better-auth answers `{ code, message }`; the rest of the API answers `{ error: { code, message, details? } }`. */
async function withOurErrors(res: Response): Promise<Response> {
  if (res.status < 400) return res;
  let body: any = null;
  try {
    const text = await res.clone().text();
    body = text ? JSON.parse(text) : null;
  } catch {
    body = null;
  }
  if (body && typeof body.error === "object" && body.error?.code) return res;
  const headers = new Headers(res.headers);
  if (res.status === 429) {
    const retry = Number(res.headers.get("x-retry-after") ?? 60);
    headers.set("Retry-After", String(retry));
    return jsonError(429, "rate_limited", `Too many attempts. Wait ${retry} seconds, then try again.`, { retryAfterSeconds: retry }, headers);
  }
  const upstream = String(body?.code ?? "");
  if (upstream === "PASSWORD_TOO_SHORT" || upstream === "PASSWORD_TOO_LONG") {
    const message = upstream === "PASSWORD_TOO_SHORT" ? "Use at least 8 characters." : "Use at most 128 characters.";
    return jsonError(400, "validation_failed", `Check the request body: password: ${message}`, { fields: [{ path: "password", message }] }, headers);
  }
  if (upstream === "VALIDATION_ERROR") {
    return jsonError(400, "validation_failed", `Check the request: ${body?.message ?? "invalid input"}`, undefined, headers);
  }
  const mapped = MESSAGES[upstream];
  if (mapped) return jsonError(upstream === "EMAIL_PASSWORD_SIGN_UP_DISABLED" ? 404 : res.status, mapped[0], mapped[1], undefined, headers);
  if (res.status === 404) return jsonError(404, "not_found", "No such endpoint.", undefined, headers);
  const code = upstream ? upstream.toLowerCase() : res.status === 403 ? "forbidden" : res.status === 401 ? "unauthenticated" : "bad_request";
  return jsonError(res.status, code, String(body?.message ?? res.statusText ?? "Request refused."), undefined, headers);
}

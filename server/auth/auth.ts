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
import { hitRateLimit } from "./rate-limit";
import { reserveSignIn, type Outcome } from "./sign-in-throttle";
import { afterResponse } from "../http/after-response";
import "./password-strength";

export const AUTH_BASE_PATH = "/api/auth";
/** seconds; the verification link in the sign-up mail */
export const EMAIL_VERIFICATION_TTL_S = 24 * 3600;
/** seconds; the one-time password reset link */
export const RESET_PASSWORD_TTL_S = 3600;

/**
 * Rate limits of better-auth's endpoints (per client address, stored in the rate_limit table),
 * on in every environment including tests. Sign-in and the reset request are limited in front of
 * better-auth (server/auth/sign-in-throttle.ts, RESET_REQUEST_RULE); better-auth's own rule for
 * them is only a backstop. Our own account routes use server/auth/rate-limit.ts.
 */
export const AUTH_RATE_RULES = {
  "/sign-in/email": { window: 60, max: 60 },
  "/sign-up/email": { window: 600, max: 5 },
  "/request-password-reset": { window: 300, max: 60 },
  "/forget-password": { window: 300, max: 3 },
  "/reset-password": { window: 300, max: 10 },
  "/send-verification-email": { window: 300, max: 3 },
  "/change-password": { window: 300, max: 5 },
} as const;

/** Password-reset requests per client address (checked before the answer; the work happens after it). */
export const RESET_REQUEST_RULE = { window: 300, max: 3 } as const;

/** better-auth's answer to a reset request, the same for every address. */
const RESET_REQUESTED = {
  status: true,
  message: "If this email exists in our system, check your email for the reset link",
};

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
    database: drizzleAdapter(ctx.db.orm, {
      provider: "sqlite",
      schema: {
        user: schema.user,
        session: schema.session,
        account: schema.account,
        verification: schema.verification,
        rateLimit: schema.rateLimit,
      },
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
            const u = await ctx.db.read((tx) =>
              tx
                .select({ deactivatedAt: schema.user.deactivatedAt })
                .from(schema.user)
                .where(eq(schema.user.id, session.userId))
                .get(),
            );
            if (!u || u.deactivatedAt) {
              throw new APIError("FORBIDDEN", {
                code: "ACCOUNT_DEACTIVATED",
                message: "This account has been removed from its shop. Ask the shop's owner for a new invitation.",
              });
            }
          },
        },
        // signing out (or a reset that ends the sessions): the session's sockets close on every node
        delete: {
          after: async (session) => {
            ctx.realtime.disconnectSession(String(session.id));
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
    logger: {
      disabled: env.NODE_ENV === "test" || env.LOG_LEVEL === "silent",
      level: "warn",
      log: (level, message, ...args) =>
        ctx.logger[level]({ ...(args.length ? { details: args } : {}) }, `auth: ${message}`),
    },
  });

  const handler = auth.handler;
  auth.handler = async (request: Request) => {
    const res = await validateFirst(request, (req, path, body) => guarded(ctx, handler, req, path, body));
    return res.status >= 400 ? withOurErrors(res) : withoutSessionToken(request, res);
  };
  return auth;
}

type Handler = (r: Request) => Promise<Response>;

/**
 * The limits in front of better-auth: sign-in goes through the per-address and per-account
 * throttle; a password-reset request is answered at once, the same for every address, and
 * better-auth does its work (token, mail in the outbox) after the answer, so neither the time nor
 * the answer tells whether the address is registered.
 */
async function guarded(
  ctx: AppContext,
  handler: Handler,
  request: Request,
  path: string,
  body: Record<string, unknown>,
): Promise<Response> {
  const ip = request.headers.get(CLIENT_IP_HEADER) ?? "0.0.0.0";
  if (path === "/sign-in/email") return throttledSignIn(ctx, handler, request, ip, String(body.email));
  if (path === "/request-password-reset") {
    const retryAfter = await hitRateLimit(ctx, `app|${ip}|request-password-reset`, RESET_REQUEST_RULE);
    if (retryAfter !== null) {
      return tooMany("rate_limited", `Too many attempts. Wait ${retryAfter} seconds, then try again.`, retryAfter);
    }
    afterResponse(() => {
      handler(request).then(
        (res) => res.status >= 400 && ctx.logger.warn({ status: res.status }, "password reset request not carried out"),
        (err) => ctx.logger.error({ err }, "password reset request failed"),
      );
    });
    const headers = { "content-type": "application/json" };
    return new Response(JSON.stringify(RESET_REQUESTED), { status: 200, headers });
  }
  return handler(request);
}

function tooMany(code: string, message: string, retryAfter: number): Response {
  const h = new Headers({ "Retry-After": String(retryAfter) });
  return jsonError(429, code, message, { retryAfterSeconds: retryAfter }, h);
}

async function throttledSignIn(
  ctx: AppContext,
  handler: Handler,
  request: Request,
  ip: string,
  email: string,
): Promise<Response> {
  const gate = await reserveSignIn(ctx, ip, email);
  if ("scope" in gate) {
    return gate.scope === "address"
      ? tooMany("rate_limited", `Too many attempts. Wait ${gate.retryAfter} seconds, then try again.`, gate.retryAfter)
      : tooMany(
          "sign_in_delayed",
          `Too many wrong passwords for this account. Wait ${gate.retryAfter} seconds, then try again, ` +
            "or reset the password.",
          gate.retryAfter,
        );
  }
  let outcome: Outcome = "other";
  try {
    const res = await handler(request);
    outcome = await signInOutcome(res);
    return res;
  } finally {
    const { notifyOwner } = await gate.settle(outcome);
    if (notifyOwner) afterResponse(() => void mailOwnerAboutFailures(ctx, email));
  }
}

/**
 * 401: a wrong password (or no such account); 200, or a refusal that comes after the password
 * check (unverified address, removed account): the password was right.
 */
async function signInOutcome(res: Response): Promise<Outcome> {
  if (res.status === 200) return "success";
  if (res.status === 401) return "failure";
  if (res.status === 403) {
    const code = await res
      .clone()
      .json()
      .then(
        (b: unknown) => (b as { code?: string } | null)?.code,
        () => undefined,
      );
    if (code === "EMAIL_NOT_VERIFIED" || code === "ACCOUNT_DEACTIVATED") return "success";
  }
  return "other";
}

async function mailOwnerAboutFailures(ctx: AppContext, email: string): Promise<void> {
  try {
    const u = await ctx.db.read((tx) =>
      tx.select().from(schema.user).where(eq(schema.user.email, email.toLowerCase())).get(),
    );
    if (!u || u.deactivatedAt) return;
    const content = mails.signInFailures(u.name, `${ctx.env.publicUrl}/forgot-password`);
    await sendMail(ctx, u.email, content, { kind: "sign_in_failures" });
  } catch (err) {
    ctx.logger.error({ err }, "could not queue the failed sign-in notice");
  }
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
export async function verificationUrl(
  ctx: AppContext,
  user: { id: string; email: string },
  callbackPath = "/sign-in?verified=1",
): Promise<string> {
  const token = await createEmailVerificationToken(
    ctx.env.AUTH_SECRET,
    user.email,
    undefined,
    EMAIL_VERIFICATION_TTL_S,
    { userId: user.id },
  );
  return `${ctx.env.publicUrl}${AUTH_BASE_PATH}/verify-email?token=${token}&callbackURL=${encodeURIComponent(callbackPath)}`;
}

function jsonError(status: number, code: string, message: string, details?: unknown, headers?: Headers): Response {
  const h = new Headers(headers);
  h.set("content-type", "application/json; charset=utf-8");
  h.delete("content-length");
  return new Response(JSON.stringify({ error: { code, message, ...(details !== undefined ? { details } : {}) } }), {
    status,
    headers: h,
  });
}

/** Our schemas (field messages, common-password refusal on reset/change) run before better-auth's own checks. */
async function validateFirst(
  request: Request,
  next: (r: Request, path: string, body: Record<string, unknown>) => Promise<Response>,
): Promise<Response> {
  const path = new URL(request.url).pathname.slice(AUTH_BASE_PATH.length);
  if (request.method !== "POST") return next(request, path, {});
  const schemaFor = BODY_SCHEMAS[path];
  if (!schemaFor) return next(request, path, {});
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
    return jsonError(
      400,
      "validation_failed",
      `Check the request body: ${first ? `${first.path ? first.path + ": " : ""}${first.message}` : "invalid input"}`,
      { fields },
    );
  }
  const headers = new Headers(request.headers);
  headers.delete("content-length");
  const data = parsed.data as Record<string, unknown>;
  return next(new Request(request.url, { method: "POST", headers, body: JSON.stringify(data) }), path, data);
}

const MESSAGES: Record<string, [code: string, message: string]> = {
  INVALID_EMAIL_OR_PASSWORD: [
    "invalid_credentials",
    "The e-mail address or the password is wrong. Check both, or reset your password.",
  ],
  EMAIL_NOT_VERIFIED: [
    "email_not_verified",
    "Confirm your e-mail address first: open the link in the mail we sent you. We have just sent a new one.",
  ],
  INVALID_TOKEN: [
    "invalid_token",
    "This link is not valid any more: it has been used or has expired. Ask for a new one.",
  ],
  TOKEN_EXPIRED: ["invalid_token", "This link has expired. Ask for a new one."],
  ACCOUNT_DEACTIVATED: [
    "account_deactivated",
    "This account has been removed from its shop. Ask the shop's owner for a new invitation.",
  ],
  EMAIL_PASSWORD_SIGN_UP_DISABLED: [
    "not_found",
    "Sign up a shop at /api/shops/sign-up or apply as an expert at /api/experts/apply.",
  ],
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
  let body: { code?: unknown; message?: unknown; error?: { code?: unknown } } | null;
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
    return jsonError(
      429,
      "rate_limited",
      `Too many attempts. Wait ${retry} seconds, then try again.`,
      { retryAfterSeconds: retry },
      headers,
    );
  }
  const upstream = String(body?.code ?? "");
  if (upstream === "PASSWORD_TOO_SHORT" || upstream === "PASSWORD_TOO_LONG") {
    const message = upstream === "PASSWORD_TOO_SHORT" ? "Use at least 8 characters." : "Use at most 128 characters.";
    return jsonError(
      400,
      "validation_failed",
      `Check the request body: password: ${message}`,
      { fields: [{ path: "password", message }] },
      headers,
    );
  }
  if (upstream === "VALIDATION_ERROR") {
    return jsonError(
      400,
      "validation_failed",
      `Check the request: ${body?.message ?? "invalid input"}`,
      undefined,
      headers,
    );
  }
  const mapped = MESSAGES[upstream];
  if (mapped)
    return jsonError(
      upstream === "EMAIL_PASSWORD_SIGN_UP_DISABLED" ? 404 : res.status,
      mapped[0],
      mapped[1],
      undefined,
      headers,
    );
  if (res.status === 404) return jsonError(404, "not_found", "No such endpoint.", undefined, headers);
  const code = upstream
    ? upstream.toLowerCase()
    : res.status === 403
      ? "forbidden"
      : res.status === 401
        ? "unauthenticated"
        : "bad_request";
  return jsonError(res.status, code, String(body?.message ?? res.statusText ?? "Request refused."), undefined, headers);
}

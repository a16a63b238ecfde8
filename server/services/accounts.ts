import { and, eq, isNull } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Role } from "../../shared/domain/case-status";
import { hashPassword } from "../auth/password";
import { verificationUrl } from "../auth/auth";
import { mails, sendMail } from "../auth/mail";

export type UserRow = typeof schema.user.$inferSelect;

/** The answer to a sign-up, identical whether the address was new or already had an account. */
export const SIGN_UP_ACCEPTED = {
  ok: true,
  message: "Check your e-mail: we have sent a link to confirm the address. You can sign in once it is confirmed.",
} as const;

export async function findUserByEmail(ctx: AppContext, email: string): Promise<UserRow | undefined> {
  return ctx.db.read((tx) => tx.select().from(schema.user).where(eq(schema.user.email, email.toLowerCase())).get());
}

export async function findUserById(ctx: AppContext, id: string): Promise<UserRow | undefined> {
  return ctx.db.read((tx) => tx.select().from(schema.user).where(eq(schema.user.id, id)).get());
}

/**
 * Inserts a user with an e-mail + password ("credential") account, the same rows better-auth writes
 * at sign-up, inside the caller's transaction.
 */
export async function insertCredentialUser(
  tx: Tx,
  u: {
    id?: string;
    email: string;
    name: string;
    role: Role;
    shopId: string | null;
    emailVerified: boolean;
    passwordHash: string;
    now: Date;
  },
): Promise<string> {
  const id = u.id ?? crypto.randomUUID();
  await tx
    .insert(schema.user)
    .values({
      id,
      name: u.name,
      email: u.email.toLowerCase(),
      emailVerified: u.emailVerified,
      role: u.role,
      shopId: u.shopId,
      createdAt: u.now,
      updatedAt: u.now,
    })
    .run();
  await tx
    .insert(schema.account)
    .values({
      id: crypto.randomUUID(),
      accountId: id,
      providerId: "credential",
      userId: id,
      password: u.passwordHash,
      createdAt: u.now,
      updatedAt: u.now,
    })
    .run();
  return id;
}

export { hashPassword };

/**
 * Mails the confirmation link for a freshly created account (through the outbox; with `opts.tx`
 * inside the transaction that creates the account). The link is signed before, so the caller can
 * build it ahead of its transaction with `verificationUrl`.
 */
export async function sendVerification(
  ctx: AppContext,
  user: { id: string; email: string; name: string },
  opts: { tx?: Tx } = {},
): Promise<void> {
  const content = mails.verifyEmail(user.name, await verificationUrl(ctx, user));
  await sendMail(ctx, user.email, content, { kind: "verify_email", ...opts });
}

/** Someone signed up with an address that already has an account: tell its owner, change nothing. */
export async function sendAlreadyRegistered(ctx: AppContext, user: { email: string; name: string }): Promise<void> {
  const base = ctx.env.publicUrl;
  const content = mails.alreadyRegistered(user.name, `${base}/sign-in`, `${base}/forgot-password`);
  await sendMail(ctx, user.email, content, { kind: "already_registered" });
}

/**
 * After the rows are committed, queue the confirmation mail; if it cannot even be queued, remove
 * what was created (`undo`) so a retry starts clean, and answer 503. (Sending happens later, from
 * the outbox, with retries; an SMTP server that is down no longer fails the request.)
 */
export async function mailOrUndo(
  ctx: AppContext,
  send: () => Promise<void>,
  undo: () => Promise<unknown>,
): Promise<void> {
  try {
    await send();
  } catch (err) {
    ctx.logger.error({ err }, "account mail failed; undoing the sign-up");
    await undo();
    const { HttpError } = await import("../http/errors");
    throw new HttpError(
      503,
      "mail_unavailable",
      "We could not send the confirmation mail just now, so nothing was saved. Try again in a minute.",
    );
  }
}

/**
 * Takes an account out of use: sets deactivated_at, deletes its sessions and closes its live
 * connections. The row stays so the cases it opened keep their history.
 */
export async function deactivateUser(ctx: AppContext, userId: string): Promise<boolean> {
  const now = ctx.now();
  const changed = await ctx.db.write(async (tx) => {
    const r = await tx
      .update(schema.user)
      .set({ deactivatedAt: now, updatedAt: now })
      .where(and(eq(schema.user.id, userId), isNull(schema.user.deactivatedAt)))
      .returning({ id: schema.user.id })
      .all();
    await tx.delete(schema.session).where(eq(schema.session.userId, userId)).run();
    return r.length > 0;
  });
  ctx.realtime.disconnectUser(userId);
  return changed;
}

/** Ends every session of a user (used on removal; password reset does it through better-auth). */
export async function revokeSessions(ctx: AppContext, userId: string): Promise<void> {
  await ctx.db.write((tx) => tx.delete(schema.session).where(eq(schema.session.userId, userId)).run());
  ctx.realtime.disconnectUser(userId);
}

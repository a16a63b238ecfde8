import { and, asc, eq, gt, isNotNull, isNull } from "drizzle-orm";
import { createHash, randomBytes } from "node:crypto";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
import { HttpError, conflict, notFound } from "../http/errors";
import { mails, sendMail } from "../auth/mail";
import { verificationUrl } from "../auth/auth";
import type { AcceptInviteInput, InviteTechnicianInput, ShopSignUpInput } from "../../shared/schemas/auth";
import {
  SIGN_UP_ACCEPTED,
  deactivateUser,
  findUserByEmail,
  hashPassword,
  insertCredentialUser,
  sendAlreadyRegistered,
} from "./accounts";

export type ShopRow = typeof schema.shop.$inferSelect;
export type InviteRow = typeof schema.invite.$inferSelect;

/** days an invitation link stays valid */
export const INVITE_TTL_DAYS = 7;

/**
 * A shop owner signs up: the shop, the owner's user and credential account and the confirmation
 * mail (a row of the outbox, sent after the answer) are written in one transaction.
 * An address that already has an account gets a "you already have an account" mail instead and
 * the same answer, so the form does not tell strangers who is registered.
 */
export async function signUpShopOwner(ctx: AppContext, input: ShopSignUpInput): Promise<typeof SIGN_UP_ACCEPTED> {
  const passwordHash = await hashPassword(input.password);
  const existing = await findUserByEmail(ctx, input.email);
  if (existing) {
    await sendAlreadyRegistered(ctx, existing).catch((err) =>
      ctx.logger.warn({ err }, "could not send already-registered mail"),
    );
    return SIGN_UP_ACCEPTED;
  }
  const now = ctx.now();
  const shopId = crypto.randomUUID();
  const userId = crypto.randomUUID();
  const link = await verificationUrl(ctx, { id: userId, email: input.email });
  try {
    // the shop, the owner and the confirmation mail (in the outbox) exist together or not at all
    await ctx.db.write(async (tx) => {
      await tx.insert(schema.shop).values({ id: shopId, name: input.shopName, createdAt: now }).run();
      const owner = { id: userId, email: input.email, name: input.name, role: "owner" as const, shopId };
      await insertCredentialUser(tx, { ...owner, emailVerified: false, passwordHash, now });
      await sendMail(ctx, input.email, mails.verifyEmail(input.name, link), { tx, kind: "verify_email" });
    });
  } catch (err) {
    // a concurrent sign-up with the same address won the unique index: answer as for an existing one
    if (String((err as Error)?.message).includes("UNIQUE")) return SIGN_UP_ACCEPTED;
    throw err;
  }
  return SIGN_UP_ACCEPTED;
}

export async function getShop(ctx: AppContext, shopId: string): Promise<ShopRow | undefined> {
  return ctx.db.read((tx) => tx.select().from(schema.shop).where(eq(schema.shop.id, shopId)).get());
}

export async function listMembers(ctx: AppContext, shopId: string) {
  return ctx.db.read((tx) =>
    tx
      .select({
        id: schema.user.id,
        name: schema.user.name,
        email: schema.user.email,
        role: schema.user.role,
        shopId: schema.user.shopId,
        createdAt: schema.user.createdAt,
        deactivatedAt: schema.user.deactivatedAt,
      })
      .from(schema.user)
      .where(and(eq(schema.user.shopId, shopId), isNull(schema.user.deactivatedAt)))
      .orderBy(asc(schema.user.createdAt))
      .all(),
  );
}

export async function listPendingInvites(ctx: AppContext, shopId: string) {
  return ctx.db.read((tx) =>
    tx
      .select({
        id: schema.invite.id,
        email: schema.invite.email,
        name: schema.invite.name,
        expiresAt: schema.invite.expiresAt,
        createdAt: schema.invite.createdAt,
      })
      .from(schema.invite)
      .where(
        and(
          eq(schema.invite.shopId, shopId),
          isNull(schema.invite.acceptedAt),
          isNull(schema.invite.revokedAt),
          gt(schema.invite.expiresAt, ctx.now()),
        ),
      )
      .orderBy(asc(schema.invite.createdAt))
      .all(),
  );
}

export const hashToken = (token: string) => createHash("sha256").update(token).digest("hex");

/**
 * The owner invites a technician by e-mail. The mail carries a one-time token; only its SHA-256 is
 * stored. A second invitation to the same address replaces the first. Invitations are limited
 * (INVITE_LIMITS); the mail is written to the outbox in the same transaction as the invitation.
 *
 * An address that already has an active account elsewhere (another shop, an expert, the desk) is
 * answered exactly like a new one — same status, same body, the same pending entry in the team
 * list, revocable the same way — so the invitation form does not tell any owner who is registered
 * (OWASP Authentication Cheat Sheet, account enumeration). That address gets a mail saying it was
 * invited but already has an account; the mail carries no acceptance link, and the stored token is
 * never sent anywhere, so the entry can't be accepted and just expires after 7 days.
 * Someone already in the owner's own team is refused with 409: the owner sees the team anyway.
 */
export async function createInvite(ctx: AppContext, actor: Actor, shop: ShopRow, input: InviteTechnicianInput) {
  const existing = await findUserByEmail(ctx, input.email);
  const active = existing && !existing.deactivatedAt ? existing : undefined;
  if (active && active.shopId === shop.id) {
    throw conflict("already_in_team", "This person is already in your team.", {
      fields: [{ path: "email", message: "Already in your team." }],
    });
  }
  const token = randomBytes(32).toString("base64url");
  const now = ctx.now();
  const row: InviteRow = {
    id: crypto.randomUUID(),
    shopId: shop.id,
    email: input.email,
    name: input.name || null,
    tokenHash: hashToken(token),
    invitedBy: actor.id,
    expiresAt: new Date(now.getTime() + INVITE_TTL_DAYS * 24 * 3600 * 1000),
    acceptedAt: null,
    revokedAt: null,
    createdAt: now,
  };
  const content = active
    ? mails.inviteExistingAccount(shop.name, actor.name, `${ctx.env.publicUrl}/sign-in`)
    : mails.invite(shop.name, actor.name, `${ctx.env.publicUrl}/accept-invite?token=${token}`);
  // The limits are counted and the invitation and its mail written in one transaction, so
  // simultaneous invitations cannot slip past a limit together.
  await ctx.db.write(async (tx) => {
    await checkInviteLimits(tx, shop, actor.id, now);
    await tx
      .update(schema.invite)
      .set({ revokedAt: now })
      .where(
        and(
          eq(schema.invite.shopId, shop.id),
          eq(schema.invite.email, input.email),
          isNull(schema.invite.acceptedAt),
          isNull(schema.invite.revokedAt),
        ),
      )
      .run();
    await tx.insert(schema.invite).values(row).run();
    await sendMail(ctx, input.email, content, { tx, kind: "invite" });
  });
  return { invite: presentInvite(row), token: active ? null : token };
}

/**
 * How many invitations may be sent (docs/api.md "Invitations"): per inviting user and per shop in
 * any hour, and per shop in any 24 hours — few for a new shop (younger than ESTABLISHED_AFTER_DAYS
 * or that has never paid for a case), so a shop opened to relay mail gets little out of it.
 * Every invitation created counts, including ones later revoked or replaced.
 */
export const INVITE_LIMITS = {
  perUserPerHour: 10,
  perShopPerHour: 20,
  newShopPerDay: 15,
  establishedShopPerDay: 100,
  establishedAfterDays: 7,
} as const;

const HOUR = 3600_000;

/** True when the shop is old enough and has paid for at least one case. */
export async function isEstablishedShop(tx: Tx, shop: ShopRow, now: Date): Promise<boolean> {
  if (now.getTime() - shop.createdAt.getTime() < INVITE_LIMITS.establishedAfterDays * 24 * HOUR) return false;
  const paid = await tx
    .select({ id: schema.payment.id })
    .from(schema.payment)
    .where(and(eq(schema.payment.shopId, shop.id), isNotNull(schema.payment.authorizedAt)))
    .limit(1)
    .get();
  return !!paid;
}

async function checkInviteLimits(tx: Tx, shop: ShopRow, userId: string, now: Date): Promise<void> {
  const dayCap = (await isEstablishedShop(tx, shop, now))
    ? INVITE_LIMITS.establishedShopPerDay
    : INVITE_LIMITS.newShopPerDay;
  const checks = [
    { scope: "user_hour", windowMs: HOUR, max: INVITE_LIMITS.perUserPerHour, who: eq(schema.invite.invitedBy, userId) },
    { scope: "shop_hour", windowMs: HOUR, max: INVITE_LIMITS.perShopPerHour, who: eq(schema.invite.shopId, shop.id) },
    { scope: "shop_day", windowMs: 24 * HOUR, max: dayCap, who: eq(schema.invite.shopId, shop.id) },
  ] as const;
  let refusal: { scope: string; retryAfter: number; max: number; windowMs: number } | null = null;
  for (const c of checks) {
    const times = await tx
      .select({ at: schema.invite.createdAt })
      .from(schema.invite)
      .where(and(c.who, gt(schema.invite.createdAt, new Date(now.getTime() - c.windowMs))))
      .orderBy(asc(schema.invite.createdAt))
      .all();
    if (times.length < c.max) continue;
    // the next place frees when the oldest invitation beyond the allowance leaves the window
    const freesAt = times[times.length - c.max].at.getTime() + c.windowMs;
    const retryAfter = Math.max(1, Math.ceil((freesAt - now.getTime()) / 1000));
    if (!refusal || retryAfter > refusal.retryAfter) {
      refusal = { scope: c.scope, retryAfter, max: c.max, windowMs: c.windowMs };
    }
  }
  if (!refusal) return;
  const per = refusal.windowMs === HOUR ? "hour" : "day";
  const who = refusal.scope === "user_hour" ? "you have" : "your shop has";
  throw new HttpError(
    429,
    "invite_limit",
    `${who[0].toUpperCase()}${who.slice(1)} sent the most invitations allowed per ${per} (${refusal.max}). ` +
      `Try again in ${formatWait(refusal.retryAfter)}.`,
    { scope: refusal.scope, limit: refusal.max, retryAfterSeconds: refusal.retryAfter },
  );
}

function formatWait(seconds: number): string {
  if (seconds < 90) return `${seconds} seconds`;
  if (seconds < 90 * 60) return `${Math.ceil(seconds / 60)} minutes`;
  return `${Math.ceil(seconds / 3600)} hours`;
}

export function presentInvite(i: Pick<InviteRow, "id" | "email" | "name" | "expiresAt" | "createdAt">) {
  return {
    id: i.id,
    email: i.email,
    name: i.name,
    expiresAt: i.expiresAt.toISOString(),
    createdAt: i.createdAt.toISOString(),
  };
}

export async function revokeInvite(ctx: AppContext, shopId: string, inviteId: string): Promise<void> {
  const r = await ctx.db.write((tx) =>
    tx
      .update(schema.invite)
      .set({ revokedAt: ctx.now() })
      .where(
        and(
          eq(schema.invite.id, inviteId),
          eq(schema.invite.shopId, shopId),
          isNull(schema.invite.acceptedAt),
          isNull(schema.invite.revokedAt),
        ),
      )
      .returning({ id: schema.invite.id })
      .all(),
  );
  if (r.length === 0) throw notFound("Invitation");
}

/** The usable invitation behind a token, or undefined (unknown, used, revoked or expired). */
export async function findUsableInvite(ctx: AppContext, token: string) {
  const now = ctx.now();
  return ctx.db.read((tx) =>
    tx
      .select({ invite: schema.invite, shopName: schema.shop.name })
      .from(schema.invite)
      .innerJoin(schema.shop, eq(schema.shop.id, schema.invite.shopId))
      .where(
        and(
          eq(schema.invite.tokenHash, hashToken(token)),
          isNull(schema.invite.acceptedAt),
          isNull(schema.invite.revokedAt),
          gt(schema.invite.expiresAt, now),
        ),
      )
      .get(),
  );
}

export const INVITE_GONE =
  "This invitation link is not valid any more: it has been used, replaced or has expired (links work for 7 days). Ask the shop's owner to send a new one.";

/**
 * Accepts an invitation: creates the technician's account in the inviting shop, already verified
 * (the link proved the address), and uses the token up. All in one transaction.
 */
export async function acceptInvite(
  ctx: AppContext,
  input: AcceptInviteInput,
): Promise<{ email: string; shopId: string; userId: string }> {
  const found = await findUsableInvite(ctx, input.token);
  if (!found) throw new HttpError(404, "invite_invalid", INVITE_GONE);
  const passwordHash = await hashPassword(input.password);
  const now = ctx.now();
  const { invite } = found;
  return ctx.db.write(async (tx) => {
    const used = await tx
      .update(schema.invite)
      .set({ acceptedAt: now })
      .where(
        and(
          eq(schema.invite.id, invite.id),
          isNull(schema.invite.acceptedAt),
          isNull(schema.invite.revokedAt),
          gt(schema.invite.expiresAt, now),
        ),
      )
      .returning({ id: schema.invite.id })
      .all();
    if (used.length !== 1) throw new HttpError(404, "invite_invalid", INVITE_GONE);
    const existing = await tx.select().from(schema.user).where(eq(schema.user.email, invite.email)).get();
    if (existing && !existing.deactivatedAt)
      throw conflict("already_registered", "This e-mail address already has an account: sign in instead.");
    if (existing) {
      // a technician removed earlier and invited again: same account, new password, back in a shop
      await tx
        .update(schema.user)
        .set({
          name: input.name,
          role: "technician",
          shopId: invite.shopId,
          emailVerified: true,
          deactivatedAt: null,
          updatedAt: now,
        })
        .where(eq(schema.user.id, existing.id))
        .run();
      await tx
        .delete(schema.account)
        .where(and(eq(schema.account.userId, existing.id), eq(schema.account.providerId, "credential")))
        .run();
      await tx
        .insert(schema.account)
        .values({
          id: crypto.randomUUID(),
          accountId: existing.id,
          providerId: "credential",
          userId: existing.id,
          password: passwordHash,
          createdAt: now,
          updatedAt: now,
        })
        .run();
      return { email: invite.email, shopId: invite.shopId, userId: existing.id };
    }
    const userId = await insertCredentialUser(tx, {
      email: invite.email,
      name: input.name,
      role: "technician",
      shopId: invite.shopId,
      emailVerified: true,
      passwordHash,
      now,
    });
    return { email: invite.email, shopId: invite.shopId, userId };
  });
}

/** The owner removes a technician: the account is deactivated, its sessions and sockets closed. */
export async function removeMember(ctx: AppContext, userId: string): Promise<void> {
  await deactivateUser(ctx, userId);
}

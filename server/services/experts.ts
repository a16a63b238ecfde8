import { and, asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import { conflict, notFound } from "../http/errors";
import { expertPolicy } from "../auth/policies/experts";
import { mails, sendMail } from "../auth/mail";
import type { ExpertApplicationInput, ExpertStatus } from "../../shared/schemas/auth";
import {
  SIGN_UP_ACCEPTED,
  findUserByEmail,
  hashPassword,
  insertCredentialUser,
  mailOrUndo,
  sendAlreadyRegistered,
  sendVerification,
} from "./accounts";

export type ExpertProfileRow = typeof schema.expertProfile.$inferSelect;

/**
 * An expert applies: user (role expert, unverified) and profile (status pending) in one
 * transaction, then the confirmation mail. An admin approves or rejects later.
 */
export async function applyAsExpert(ctx: AppContext, input: ExpertApplicationInput): Promise<typeof SIGN_UP_ACCEPTED> {
  const passwordHash = await hashPassword(input.password);
  const existing = await findUserByEmail(ctx, input.email);
  if (existing) {
    await sendAlreadyRegistered(ctx, existing).catch((err) =>
      ctx.logger.warn({ err }, "could not send already-registered mail"),
    );
    return SIGN_UP_ACCEPTED;
  }
  const now = ctx.now();
  const makes = [...new Set(input.makes.map((m) => m.trim()).filter(Boolean))];
  let userId: string;
  try {
    userId = await ctx.db.write(async (tx) => {
      const id = await insertCredentialUser(tx, {
        email: input.email,
        name: input.name,
        role: "expert",
        shopId: null,
        emailVerified: false,
        passwordHash,
        now,
      });
      await tx
        .insert(schema.expertProfile)
        .values({
          userId: id,
          systems: [...new Set(input.systems)],
          makes,
          bio: input.bio,
          yearsExperience: input.yearsExperience ?? null,
          status: "pending",
          available: false,
          createdAt: now,
        })
        .run();
      return id;
    });
  } catch (err) {
    if (String((err as Error)?.message).includes("UNIQUE")) return SIGN_UP_ACCEPTED;
    throw err;
  }
  await mailOrUndo(
    ctx,
    () => sendVerification(ctx, { id: userId, email: input.email, name: input.name }),
    () => ctx.db.write((tx) => tx.delete(schema.user).where(eq(schema.user.id, userId)).run()),
  );
  return SIGN_UP_ACCEPTED;
}

export async function getExpertProfile(ctx: AppContext, userId: string): Promise<ExpertProfileRow | undefined> {
  return ctx.db.read((tx) =>
    tx.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, userId)).get(),
  );
}

export async function listExperts(ctx: AppContext, status: ExpertStatus) {
  return ctx.db.read((tx) =>
    tx
      .select({
        profile: schema.expertProfile,
        name: schema.user.name,
        email: schema.user.email,
        emailVerified: schema.user.emailVerified,
      })
      .from(schema.expertProfile)
      .innerJoin(schema.user, eq(schema.user.id, schema.expertProfile.userId))
      .where(eq(schema.expertProfile.status, status))
      .orderBy(asc(schema.expertProfile.createdAt))
      .all(),
  );
}

/** Approves or rejects a pending application (or re-decides one); mails the expert. */
export async function decideExpert(
  ctx: AppContext,
  actor: Actor,
  userId: string,
  decision: "approved" | "rejected",
  note?: string,
): Promise<ExpertProfileRow> {
  const now = ctx.now();
  const set = {
    status: decision,
    decidedBy: actor.id,
    decidedAt: now,
    ...(decision === "rejected" ? { available: false } : {}),
  };
  // the decision and its mail (a row of the outbox) are stored together
  return ctx.db.write(async (tx) => {
    const profile = await tx.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, userId)).get();
    if (!profile) throw notFound("Expert profile");
    if (profile.status === decision) throw conflict("already_decided", `This application is already ${decision}.`);
    const updated = await tx
      .update(schema.expertProfile)
      .set(set)
      .where(and(eq(schema.expertProfile.userId, userId), eq(schema.expertProfile.status, profile.status)))
      .returning()
      .get();
    if (!updated) throw conflict("already_decided", "This application was decided meanwhile.");
    const user = await tx.select().from(schema.user).where(eq(schema.user.id, userId)).get();
    if (user) {
      const content = mails.expertDecision(user.name, decision === "approved", note, `${ctx.env.publicUrl}/`);
      await sendMail(ctx, user.email, content, { tx });
    }
    return updated;
  });
}

/**
 * An expert sets themselves available (offered new cases) or away — approved experts only (the
 * expert policy), by PATCH /api/experts/me and PUT /api/queue/availability alike.
 */
export async function setOwnAvailability(ctx: AppContext, actor: Actor, available: boolean): Promise<ExpertProfileRow> {
  return ctx.db.write(async (tx) => {
    const profile = await tx.select().from(schema.expertProfile).where(eq(schema.expertProfile.userId, actor.id)).get();
    if (!profile) throw notFound("Expert profile");
    expertPolicy.authorize(actor, "setAvailability", {
      userId: profile.userId,
      status: profile.status as ExpertStatus,
    });
    await tx.update(schema.expertProfile).set({ available }).where(eq(schema.expertProfile.userId, actor.id)).run();
    return { ...profile, available };
  });
}

export function presentProfile(p: ExpertProfileRow) {
  return {
    userId: p.userId,
    systems: p.systems,
    makes: p.makes,
    bio: p.bio,
    yearsExperience: p.yearsExperience,
    status: p.status as ExpertStatus,
    available: p.available,
    maxOpenCases: p.maxOpenCases,
    decidedAt: p.decidedAt ? p.decidedAt.toISOString() : null,
    createdAt: p.createdAt.toISOString(),
  };
}

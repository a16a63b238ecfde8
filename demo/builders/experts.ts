import { schema } from "../../server/db/client";
import type { VehicleSystem } from "../../shared/domain/case-status";
import { ctxOf, type HasCtx } from "./context";
import { createUser, type CreatedUser, type CreateUserOptions } from "./users";

export type ExpertProfileRow = typeof schema.expertProfile.$inferSelect;
export type ExpertStatus = "pending" | "approved" | "rejected" | "suspended";

export interface CreateExpertOptions extends Omit<CreateUserOptions, "role" | "shopId"> {
  systems?: VehicleSystem[];
  /** invented makes only; empty = any make */
  makes?: string[];
  bio?: string;
  yearsExperience?: number;
  /** default "approved" */
  status?: ExpertStatus;
  /** default true when approved */
  available?: boolean;
  maxOpenCases?: number;
}

export interface CreatedExpert extends CreatedUser {
  profile: ExpertProfileRow;
}

/** An expert with a profile: approved and available, ignition specialist, any make, unless told otherwise. */
export async function createExpert(on: HasCtx, opts: CreateExpertOptions = {}): Promise<CreatedExpert> {
  const ctx = ctxOf(on);
  const { systems, makes, bio, yearsExperience, status, available, maxOpenCases, ...userOpts } = opts;
  const user = await createUser(ctx, { ...userOpts, role: "expert", shopId: null });
  const st = status ?? "approved";
  const profile: ExpertProfileRow = {
    userId: user.id,
    systems: systems ?? ["ignition"],
    makes: makes ?? [],
    bio: bio ?? "Twenty years on the bench with secondary ignition and scope work.",
    yearsExperience: yearsExperience ?? 12,
    status: st,
    available: available ?? st === "approved",
    maxOpenCases: maxOpenCases ?? 3,
    stripeAccountId: null,
    decidedBy: null,
    decidedAt: st === "pending" ? null : ctx.now(),
    createdAt: ctx.now(),
  };
  await ctx.db.write((tx) => tx.insert(schema.expertProfile).values(profile).run());
  return { ...user, profile };
}

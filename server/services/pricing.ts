/**
 * Pricing set by an admin: tiers (price in integer cents, answer deadline in minutes), the desk's
 * share in basis points and the queue's timings. A fresh database gets the defaults below on first
 * read. Payments take a snapshot at submit, so a later change never alters a case in flight.
 */
import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema } from "../db/client";
import type { Actor } from "../auth/session";
import type { DbLike } from "./case-state";
import { badRequest } from "../http/errors";
import type { z } from "zod";
import type { pricingUpdateSchema } from "../../shared/schemas/queue";

const { pricingTier, deskSettings } = schema;

export interface Tier {
  id: string;
  label: string;
  description: string | null;
  priceCents: number;
  deadlineMinutes: number;
  active: boolean;
  sortOrder: number;
}

export interface Pricing {
  currency: string;
  deskShareBasisPoints: number;
  firstWaveSize: number;
  widenAfterMinutes: number;
  closeAnsweredAfterDays: number;
  tiers: Tier[];
  updatedAt: string | null;
}

/** The product's starting price list (invented figures for a new desk; an admin changes them). */
export const DEFAULT_TIERS: readonly Omit<Tier, "sortOrder">[] = [
  { id: "standard", label: "Standard", description: "An expert's answer within 24 hours.", priceCents: 4900, deadlineMinutes: 24 * 60, active: true },
  { id: "priority", label: "Priority", description: "An expert's answer within 2 hours, for a car on the lift.", priceCents: 12900, deadlineMinutes: 2 * 60, active: true },
];
export const DEFAULT_SETTINGS = { currency: "usd", deskShareBasisPoints: 2000, firstWaveSize: 3, widenAfterMinutes: 30, closeAnsweredAfterDays: 7 } as const;

function ensureDefaults(db: DbLike, now: Date): void {
  const s = db.select().from(deskSettings).where(eq(deskSettings.id, 1)).get();
  if (s) return;
  db.insert(deskSettings)
    .values({ id: 1, ...DEFAULT_SETTINGS, updatedAt: now })
    .onConflictDoNothing()
    .run();
  const anyTier = db.select({ id: pricingTier.id }).from(pricingTier).limit(1).get();
  if (!anyTier) {
    db.insert(pricingTier)
      .values(DEFAULT_TIERS.map((t, i) => ({ ...t, sortOrder: i, updatedAt: now })))
      .onConflictDoNothing()
      .run();
  }
}

export function getPricing(db: DbLike, now: Date): Pricing {
  ensureDefaults(db, now);
  const s = db.select().from(deskSettings).where(eq(deskSettings.id, 1)).get()!;
  const tiers = db.select().from(pricingTier).orderBy(asc(pricingTier.sortOrder), asc(pricingTier.id)).all();
  return {
    currency: s.currency,
    deskShareBasisPoints: s.deskShareBasisPoints,
    firstWaveSize: s.firstWaveSize,
    widenAfterMinutes: s.widenAfterMinutes,
    closeAnsweredAfterDays: s.closeAnsweredAfterDays,
    tiers: tiers.map((t) => ({ id: t.id, label: t.label, description: t.description, priceCents: t.priceCents, deadlineMinutes: t.deadlineMinutes, active: t.active, sortOrder: t.sortOrder })),
    updatedAt: s.updatedAt ? s.updatedAt.toISOString() : null,
  };
}

/** What a technician sees before paying: the active tiers with price and deadline. */
export function publicPricing(db: DbLike, now: Date): { currency: string; tiers: Tier[] } {
  const p = getPricing(db, now);
  return { currency: p.currency, tiers: p.tiers.filter((t) => t.active) };
}

/** Replaces the price list. Tiers left out are kept but deactivated (old payments name them). */
export function updatePricing(ctx: AppContext, actor: Actor, input: z.output<typeof pricingUpdateSchema>): Pricing {
  const now = ctx.now();
  return ctx.db.transaction((tx) => {
    ensureDefaults(tx, now);
    tx.update(deskSettings)
      .set({
        currency: input.currency,
        deskShareBasisPoints: input.deskShareBasisPoints,
        firstWaveSize: input.firstWaveSize,
        widenAfterMinutes: input.widenAfterMinutes,
        closeAnsweredAfterDays: input.closeAnsweredAfterDays,
        updatedBy: actor.id,
        updatedAt: now,
      })
      .where(eq(deskSettings.id, 1))
      .run();
    const keep = new Set(input.tiers.map((t) => t.id));
    for (const t of tx.select().from(pricingTier).all()) {
      if (!keep.has(t.id) && t.active) tx.update(pricingTier).set({ active: false, updatedBy: actor.id, updatedAt: now }).where(eq(pricingTier.id, t.id)).run();
    }
    input.tiers.forEach((t, i) => {
      const values = { label: t.label, description: t.description ?? null, priceCents: t.priceCents, deadlineMinutes: t.deadlineMinutes, active: t.active, sortOrder: i, updatedBy: actor.id, updatedAt: now };
      tx.insert(pricingTier)
        .values({ id: t.id, ...values })
        .onConflictDoUpdate({ target: pricingTier.id, set: values })
        .run();
    });
    return getPricing(tx, now);
  });
}

/** The tier a submit asks for, with its deadline; 400 when unknown or inactive. */
export function quoteTier(db: DbLike, tierId: string, now: Date): { tier: Tier; pricing: Pricing } {
  const pricing = getPricing(db, now);
  const tier = pricing.tiers.find((t) => t.id === tierId && t.active);
  if (!tier) {
    throw badRequest("unknown_tier", `There is no tier "${tierId}". Choose one of: ${pricing.tiers.filter((t) => t.active).map((t) => t.id).join(", ")}.`);
  }
  return { tier, pricing };
}

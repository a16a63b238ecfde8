/**
 * Pricing set by an admin: tiers (price in integer cents, answer deadline in minutes), the desk's
 * share in basis points and the queue's timings. Until an admin saves a price list, the defaults
 * below apply (they are written with the first save). Payments take a snapshot at submit, so a
 * later change never alters a case in flight.
 */
import { asc, eq } from "drizzle-orm";
import type { AppContext } from "../context";
import { schema, type Tx } from "../db/client";
import type { Actor } from "../auth/session";
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
  {
    id: "standard",
    label: "Standard",
    description: "An expert's answer within 24 hours.",
    priceCents: 4900,
    deadlineMinutes: 24 * 60,
    active: true,
  },
  {
    id: "priority",
    label: "Priority",
    description: "An expert's answer within 2 hours, for a car on the lift.",
    priceCents: 12900,
    deadlineMinutes: 2 * 60,
    active: true,
  },
];
export const DEFAULT_SETTINGS = {
  currency: "usd",
  deskShareBasisPoints: 2000,
  firstWaveSize: 3,
  widenAfterMinutes: 30,
  closeAnsweredAfterDays: 7,
} as const;

async function ensureDefaults(tx: Tx, now: Date): Promise<void> {
  const s = await tx.select().from(deskSettings).where(eq(deskSettings.id, 1)).get();
  if (s) return;
  await tx
    .insert(deskSettings)
    .values({ id: 1, ...DEFAULT_SETTINGS, updatedAt: now })
    .onConflictDoNothing()
    .run();
  const anyTier = await tx.select({ id: pricingTier.id }).from(pricingTier).limit(1).get();
  if (!anyTier) {
    await tx
      .insert(pricingTier)
      .values(DEFAULT_TIERS.map((t, i) => ({ ...t, sortOrder: i, updatedAt: now })))
      .onConflictDoNothing()
      .run();
  }
}

/** The price list in force (the defaults until an admin has saved one). Reads only. */
export async function getPricing(tx: Tx): Promise<Pricing> {
  const s = await tx.select().from(deskSettings).where(eq(deskSettings.id, 1)).get();
  const rows = await tx.select().from(pricingTier).orderBy(asc(pricingTier.sortOrder), asc(pricingTier.id)).all();
  const tiers: Tier[] = rows.length
    ? rows.map((t) => ({
        id: t.id,
        label: t.label,
        description: t.description,
        priceCents: t.priceCents,
        deadlineMinutes: t.deadlineMinutes,
        active: t.active,
        sortOrder: t.sortOrder,
      }))
    : DEFAULT_TIERS.map((t, i) => ({ ...t, sortOrder: i }));
  const settings = s ?? { ...DEFAULT_SETTINGS, updatedAt: null };
  return {
    currency: settings.currency,
    deskShareBasisPoints: settings.deskShareBasisPoints,
    firstWaveSize: settings.firstWaveSize,
    widenAfterMinutes: settings.widenAfterMinutes,
    closeAnsweredAfterDays: settings.closeAnsweredAfterDays,
    tiers,
    updatedAt: settings.updatedAt ? settings.updatedAt.toISOString() : null,
  };
}

/** What a technician sees before paying: the active tiers with price and deadline. */
export async function publicPricing(tx: Tx): Promise<{ currency: string; tiers: Omit<Tier, "sortOrder">[] }> {
  const p = await getPricing(tx);
  return { currency: p.currency, tiers: p.tiers.filter((t) => t.active).map(({ sortOrder: _s, ...t }) => t) };
}

/** Replaces the price list. Tiers left out are kept but deactivated (old payments name them). */
export async function updatePricing(
  ctx: AppContext,
  actor: Actor,
  input: z.output<typeof pricingUpdateSchema>,
): Promise<Pricing> {
  const now = ctx.now();
  return ctx.db.write(async (tx) => {
    await ensureDefaults(tx, now);
    await tx
      .update(deskSettings)
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
    for (const t of await tx.select().from(pricingTier).all()) {
      if (!keep.has(t.id) && t.active) {
        await tx
          .update(pricingTier)
          .set({ active: false, updatedBy: actor.id, updatedAt: now })
          .where(eq(pricingTier.id, t.id))
          .run();
      }
    }
    for (const [i, t] of input.tiers.entries()) {
      const values = {
        label: t.label,
        description: t.description ?? null,
        priceCents: t.priceCents,
        deadlineMinutes: t.deadlineMinutes,
        active: t.active,
        sortOrder: i,
        updatedBy: actor.id,
        updatedAt: now,
      };
      await tx
        .insert(pricingTier)
        .values({ id: t.id, ...values })
        .onConflictDoUpdate({ target: pricingTier.id, set: values })
        .run();
    }
    return getPricing(tx);
  });
}

/** The tier a submit asks for, with its deadline; 400 when unknown or inactive. */
export async function quoteTier(tx: Tx, tierId: string): Promise<{ tier: Tier; pricing: Pricing }> {
  const pricing = await getPricing(tx);
  const tier = pricing.tiers.find((t) => t.id === tierId && t.active);
  if (!tier) {
    throw badRequest(
      "unknown_tier",
      `There is no tier "${tierId}". Choose one of: ${pricing.tiers
        .filter((t) => t.active)
        .map((t) => t.id)
        .join(", ")}.`,
    );
  }
  return { tier, pricing };
}

/** GET /api/pricing */
export function readPublicPricing(ctx: AppContext) {
  return ctx.db.read(async (tx) => publicPricing(tx));
}

/** GET /api/admin/pricing */
export function readPricing(ctx: AppContext): Promise<Pricing> {
  return ctx.db.read(async (tx) => getPricing(tx));
}

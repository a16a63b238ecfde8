/**
 * Request schemas of the paid queue (zod 4), shared by the client forms and the server routes.
 * Money is integer cents; the desk's share is in basis points (1 bp = 0.01 %).
 */
import { z } from "zod";
import { noticeTopics } from "../domain/notice-topics";

const trimmed = (max: number) => z.string().trim().max(max);
const required = (label: string, max: number) =>
  z.string().trim().min(1, `${label} is required.`).max(max, `${label} is too long (at most ${max} characters).`);

export const tierIdSchema = z
  .string()
  .trim()
  .min(2)
  .max(32)
  .regex(/^[a-z][a-z0-9-]*$/, "Use lower-case letters, digits and hyphens, starting with a letter.");

/** POST /api/cases/:id/submit */
export const submitCaseSchema = z.object({ tier: tierIdSchema });
export type SubmitCaseInput = z.infer<typeof submitCaseSchema>;

export const pricingTierSchema = z.object({
  id: tierIdSchema,
  label: required("Label", 60),
  description: trimmed(300)
    .nullish()
    .transform((v) => (v ? v : null)),
  /** integer cents; Stripe refuses card charges under 50 cents in USD/EUR */
  priceCents: z.number().int("Price must be whole cents.").min(50, "Price must be at least 50 cents.").max(99_999_999),
  /** answer deadline after payment; at most 6 days, inside a card hold's 7-day validity */
  deadlineMinutes: z
    .number()
    .int()
    .min(15, "A deadline shorter than 15 minutes cannot be met.")
    .max(6 * 24 * 60, "The deadline must end inside the card hold (6 days at most)."),
  active: z.boolean().default(true),
});
export type PricingTierInput = z.infer<typeof pricingTierSchema>;

/** PUT /api/admin/pricing — the whole price list at once. */
export const pricingUpdateSchema = z
  .object({
    currency: z
      .string()
      .trim()
      .toLowerCase()
      .regex(/^[a-z]{3}$/, "Currency is a three-letter ISO 4217 code.")
      .default("usd"),
    deskShareBasisPoints: z.number().int().min(0).max(10_000),
    firstWaveSize: z.number().int().min(1).max(50).default(3),
    widenAfterMinutes: z
      .number()
      .int()
      .min(1)
      .max(24 * 60)
      .default(30),
    closeAnsweredAfterDays: z.number().int().min(1).max(90).default(7),
    tiers: z.array(pricingTierSchema).min(1, "Keep at least one tier.").max(10),
  })
  .superRefine((v, ctx) => {
    const seen = new Set<string>();
    v.tiers.forEach((t, i) => {
      if (seen.has(t.id))
        ctx.addIssue({ code: "custom", path: ["tiers", i, "id"], message: `Tier "${t.id}" appears twice.` });
      seen.add(t.id);
    });
    if (!v.tiers.some((t) => t.active))
      ctx.addIssue({ code: "custom", path: ["tiers"], message: "Keep at least one tier active." });
  });
export type PricingUpdateInput = z.input<typeof pricingUpdateSchema>;

/** POST /api/cases/:id/request-data */
export const requestDataSchema = z.object({ message: required("Message", 2000) });

/** POST /api/cases/:id/data-sent */
export const dataSentSchema = z.object({ note: trimmed(2000).optional() });

/** POST /api/cases/:id/answer */
export const answerSchema = z.object({
  diagnosis: required("Diagnosis", 5000),
  rootCause: required("Root cause", 5000),
  recommendedFix: required("Recommended fix", 5000),
  testsToConfirm: required("Tests to confirm", 5000),
});
export type AnswerInput = z.infer<typeof answerSchema>;

/** POST /api/cases/:id/confirm */
export const confirmSchema = z.object({
  fixed: z.boolean(),
  note: trimmed(2000).optional().default(""),
  rating: z.number().int().min(1).max(5).optional(),
});
export type ConfirmInput = z.input<typeof confirmSchema>;

/** PUT /api/queue/availability */
export const availabilitySchema = z.object({ available: z.boolean() });

/** POST /api/admin/payouts */
export const payoutRunSchema = z.object({ expertId: z.string().min(1).optional() });

/** POST /api/admin/cases/:id/refund */
export const refundSchema = z.object({ reason: trimmed(500).optional() });

/**
 * Shown wherever the product passes on test advice (the expert's "tests to confirm").
 * Common practice, no source: the usual caution of the trade about secondary ignition.
 */
export const ignitionSafetyNote =
  "Safety: ignition secondary voltage reaches tens of kilovolts. Use insulated tools and proper pickups, keep clear of coil and plug leads with the engine running, and follow the vehicle manufacturer's procedure, local codes and licensed practice. The advice here does not replace them.";

/** POST /api/admin/cases/:id/reassign */
export const reassignSchema = z.object({
  expertId: z.string().trim().min(1, "Name the expert.").max(64),
  /** why the desk moves the case (kept in its history) */
  reason: trimmed(500).optional(),
});

/** PUT /api/me/notice-settings: one entry per topic to change (shared/domain/notice-topics.ts). */
export const noticeSettingsSchema = z.object({
  topics: z
    .array(
      z.object({ topic: z.enum(noticeTopics, { error: "Unknown topic." }), inApp: z.boolean(), mail: z.boolean() }),
    )
    .min(1, "Name at least one topic.")
    .max(noticeTopics.length),
});
export type NoticeSettingsInput = z.infer<typeof noticeSettingsSchema>;

/** GET /api/cases/:id/payment?sync=1 */
export const paymentQuerySchema = z.object({ sync: z.enum(["0", "1"]).optional() });

/** GET /api/billing?shopId= (admins name the shop) */
export const billingQuerySchema = z.object({ shopId: z.string().trim().min(1).max(64).optional() });

/** GET /api/admin/ledger?caseId= */
export const ledgerQuerySchema = z.object({ caseId: z.string().trim().min(1).max(64).optional() });

/** GET /api/billing/receipts/:paymentId */
export const receiptParamsSchema = z.object({ paymentId: z.string().trim().min(1).max(64) });

/** GET /api/notifications */
export const notificationsQuerySchema = z.object({
  unread: z.enum(["0", "1"]).optional(),
  limit: z.coerce.number().int().min(1).max(200).optional(),
});

import { z } from "zod";
import { isCommonPassword } from "../domain/common-passwords";
import { passwordProblem } from "../domain/password-strength";
import { roles, systems } from "../domain/case-status";

/**
 * Account schemas shared by the server (validation of every request) and the client (forms).
 * Messages say how to fix the input.
 */

export const PASSWORD_MIN = 8;
export const PASSWORD_MAX = 128;

export const emailSchema = z
  .string({ error: "Enter your e-mail address." })
  .trim()
  .toLowerCase()
  .min(1, "Enter your e-mail address.")
  .max(254, "Use an e-mail address of at most 254 characters.")
  .pipe(z.email({ error: "Enter an e-mail address like name@example.com." }));

/**
 * A new password: 8–128 characters and not on the list of the most common passwords. The object
 * schemas that take one add the strength rule (strongPassword below) with the person's details.
 */
export const newPasswordSchema = z
  .string({ error: "Choose a password." })
  .min(PASSWORD_MIN, `Use at least ${PASSWORD_MIN} characters.`)
  .max(PASSWORD_MAX, `Use at most ${PASSWORD_MAX} characters.`)
  .refine(
    (p) => !isCommonPassword(p),
    "This is one of the most common passwords. Choose one that is harder to guess, e.g. a few unrelated words.",
  );

/**
 * The strength rule (shared/domain/password-strength.ts) on an object schema: refuses the password
 * in `field` when it is too easy to guess, also given the person's own details from `inputs`.
 * Runs only when the field passed its own checks (length, common list), so each problem is
 * reported once.
 */
function strongPassword<T extends Record<string, unknown>>(
  field: keyof T & string,
  inputs: (v: T) => unknown[] = () => [],
) {
  return (v: T, ctx: z.RefinementCtx) => {
    const p = v[field];
    if (!newPasswordSchema.safeParse(p).success) return;
    const own = inputs(v).filter((x): x is string => typeof x === "string");
    const problem = passwordProblem(p as string, own);
    if (problem) ctx.addIssue({ code: "custom", path: [field], message: problem });
  };
}

export const personNameSchema = z
  .string({ error: "Enter your name." })
  .trim()
  .min(1, "Enter your name.")
  .max(100, "Use at most 100 characters for the name.");

export const signInSchema = z.object({
  email: emailSchema,
  password: z
    .string({ error: "Enter your password." })
    .min(1, "Enter your password.")
    .max(PASSWORD_MAX, `Passwords have at most ${PASSWORD_MAX} characters.`),
  rememberMe: z.boolean().optional(),
  callbackURL: z.string().max(500).optional(),
});
export type SignInInput = z.infer<typeof signInSchema>;

export const shopSignUpSchema = z
  .object({
    shopName: z
      .string({ error: "Enter the shop's name." })
      .trim()
      .min(2, "Enter the shop's name (at least 2 characters).")
      .max(100, "Use at most 100 characters for the shop's name."),
    name: personNameSchema,
    email: emailSchema,
    password: newPasswordSchema,
  })
  .superRefine(strongPassword("password", (v) => [v.email, v.name, v.shopName]));
export type ShopSignUpInput = z.infer<typeof shopSignUpSchema>;

export const expertSystems = systems;
export const vehicleMakeSchema = z
  .string()
  .trim()
  .min(1, "Remove the empty make.")
  .max(40, "Use at most 40 characters per make.");

export const expertApplicationSchema = z
  .object({
    name: personNameSchema,
    email: emailSchema,
    password: newPasswordSchema,
    systems: z
      .array(z.enum(systems, { error: "Pick systems from the list." }))
      .min(1, "Pick at least one system you specialise in.")
      .max(systems.length),
    /** vehicle makes the expert knows well; empty = any make */
    makes: z.array(vehicleMakeSchema).max(30, "List at most 30 makes."),
    bio: z
      .string({ error: "Tell us about your experience." })
      .trim()
      .min(20, "Tell us a little more about your experience (at least 20 characters).")
      .max(2000, "Keep the experience text under 2000 characters."),
    yearsExperience: z
      .number({ error: "Enter a whole number of years." })
      .int("Enter a whole number of years.")
      .min(0, "Years can't be negative.")
      .max(70, "Enter at most 70 years.")
      .optional(),
  })
  .superRefine(strongPassword("password", (v) => [v.email, v.name]));
export type ExpertApplicationInput = z.infer<typeof expertApplicationSchema>;

export const requestPasswordResetSchema = z.object({
  email: emailSchema,
  redirectTo: z.string().max(500).optional(),
});
export type RequestPasswordResetInput = z.infer<typeof requestPasswordResetSchema>;

export const resetPasswordSchema = z
  .object({
    token: z
      .string({ error: "The reset link is incomplete: open it again from the e-mail." })
      .min(1, "The reset link is incomplete: open it again from the e-mail.")
      .max(500),
    newPassword: newPasswordSchema,
  })
  .superRefine(strongPassword("newPassword"));
export type ResetPasswordInput = z.infer<typeof resetPasswordSchema>;

export const changePasswordSchema = z
  .object({
    currentPassword: z.string().min(1, "Enter your current password.").max(PASSWORD_MAX),
    newPassword: newPasswordSchema,
    revokeOtherSessions: z.boolean().optional(),
  })
  .superRefine(strongPassword("newPassword"));

export const resendVerificationSchema = z.object({
  email: emailSchema,
  callbackURL: z.string().max(500).optional(),
});

export const inviteTechnicianSchema = z.object({
  email: emailSchema,
  name: z.string().trim().max(100, "Use at most 100 characters for the name.").optional(),
});
export type InviteTechnicianInput = z.infer<typeof inviteTechnicianSchema>;

const inviteTokenSchema = z
  .string({ error: "The invitation link is incomplete: open it again from the e-mail." })
  .min(20, "The invitation link is incomplete: open it again from the e-mail.")
  .max(200, "The invitation link is not valid: open it again from the e-mail.");

export const invitePreviewSchema = z.object({ token: inviteTokenSchema });

export const acceptInviteSchema = z
  .object({
    token: inviteTokenSchema,
    name: personNameSchema,
    password: newPasswordSchema,
  })
  .superRefine(strongPassword("password", (v) => [v.name]));
export type AcceptInviteInput = z.infer<typeof acceptInviteSchema>;

export const expertStatuses = ["pending", "approved", "rejected", "suspended"] as const;
export type ExpertStatus = (typeof expertStatuses)[number];

export const expertAvailabilitySchema = z.object({
  available: z.boolean({ error: "Say whether you are available (true or false)." }),
});

export const expertDecisionSchema = z.object({
  note: z.string().trim().max(1000, "Keep the note under 1000 characters.").optional(),
});

export const expertListQuerySchema = z.object({
  status: z.enum(expertStatuses, { error: `Use one of: ${expertStatuses.join(", ")}.` }).default("pending"),
});

export const idParamSchema = z.object({ id: z.string().min(1).max(64) });

/** The signed-in user as `GET /api/me` answers. */
export const meSchema = z.object({
  id: z.string(),
  email: z.string(),
  name: z.string(),
  role: z.enum(roles),
  shopId: z.string().nullable(),
});
export type Me = z.infer<typeof meSchema>;

/** `GET /api/config`: what the client needs to know before anyone signs in. */
export interface PublicConfig {
  demo: boolean;
  demoPassword: string | null;
  demoSignIns: { email: string; label: string }[];
  /** the development inbox at /dev/mail is available */
  devMail: boolean;
}

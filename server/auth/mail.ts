import type { AppContext } from "../context";
import { renderMail } from "../integrations/mailer";

/**
 * The account mails (verification, password reset, invitation, expert decisions): a heading, a few
 * lines of text and one link each, rendered in the product's mail layout.
 */
export interface MailContent {
  subject: string;
  heading: string;
  lines: string[];
  action?: { label: string; url: string };
  footer?: string;
}

/** Uses the product's one mail layout (server/integrations/mailer.ts). */
export function renderAccountMail(m: MailContent): { subject: string; text: string; html: string } {
  const lines = [...m.lines, ...(m.footer ? [m.footer] : [])];
  return { subject: m.subject, ...renderMail(m.heading, lines, m.action) };
}

export async function sendMail(ctx: AppContext, to: string, m: MailContent): Promise<void> {
  const r = renderAccountMail(m);
  await ctx.mailer.send({ to, subject: r.subject, text: r.text, html: r.html });
}

export const mails = {
  verifyEmail: (name: string, url: string): MailContent => ({
    subject: "Confirm your e-mail address for Burnline",
    heading: `Hello ${name},`,
    lines: ["Please confirm that this is your e-mail address. You can sign in to Burnline once it is confirmed."],
    action: { label: "Confirm my e-mail address", url },
    footer: "The link works for 24 hours. If you did not sign up for Burnline, ignore this mail.",
  }),
  alreadyRegistered: (name: string, signInUrl: string, resetUrl: string): MailContent => ({
    subject: "You already have a Burnline account",
    heading: `Hello ${name},`,
    lines: [
      "Someone (probably you) tried to sign up for Burnline with this e-mail address, but it already has an account.",
      `Sign in at ${signInUrl}, or if you have forgotten the password, reset it at ${resetUrl}.`,
    ],
    action: { label: "Sign in", url: signInUrl },
    footer: "If this was not you, you can ignore this mail; nothing has changed.",
  }),
  resetPassword: (name: string, url: string): MailContent => ({
    subject: "Reset your Burnline password",
    heading: `Hello ${name},`,
    lines: ["We received a request to reset your password. Choose a new one with the link below.", "Resetting signs you out everywhere."],
    action: { label: "Choose a new password", url },
    footer: "The link works once, for 1 hour. If you did not ask for this, ignore this mail: your password stays as it is.",
  }),
  invite: (shopName: string, inviterName: string, url: string): MailContent => ({
    subject: `${inviterName} invited you to ${shopName} on Burnline`,
    heading: `Join ${shopName} on Burnline`,
    lines: [`${inviterName} invited you to join ${shopName} as a technician: you will open cases and send scope captures for a second opinion.`],
    action: { label: "Accept the invitation", url },
    footer: "The link works once, for 7 days. If you were not expecting this, ignore this mail.",
  }),
  /** An invitation to an address that already has an account: no acceptance link, nothing changes. */
  inviteExistingAccount: (shopName: string, inviterName: string, signInUrl: string): MailContent => ({
    subject: `${inviterName} invited you to ${shopName} on Burnline`,
    heading: `An invitation to ${shopName}`,
    lines: [
      `${inviterName} invited this e-mail address to join ${shopName} on Burnline as a technician.`,
      "This address already has a Burnline account, and an account belongs to one shop only, so the invitation can't be used and nothing has changed on your account.",
      `If you want to join ${shopName}, ask ${inviterName} to invite another e-mail address of yours. To use your account as it is, sign in at ${signInUrl}.`,
    ],
    footer: "If you were not expecting this, ignore this mail.",
  }),
  expertDecision: (name: string, approved: boolean, note: string | undefined, url: string): MailContent => ({
    subject: approved ? "Your Burnline expert application is approved" : "Your Burnline expert application",
    heading: `Hello ${name},`,
    lines: approved
      ? ["Your application to review cases on Burnline is approved. Sign in and set yourself available to start taking cases from the queue."]
      : ["Thank you for applying to review cases on Burnline. We are not able to approve your application at this time."],
    ...(note ? { footer: `Note from the desk: ${note}` } : {}),
    action: { label: "Open Burnline", url },
  }),
};

import type { AppContext, EnqueueOptions } from "../context";
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

/**
 * Queues an account mail in the outbox (sent after the request is answered). Pass `opts.tx` to
 * write it inside the transaction that makes the change it reports.
 */
export async function sendMail(ctx: AppContext, to: string, m: MailContent, opts: EnqueueOptions = {}): Promise<void> {
  const r = renderAccountMail(m);
  await ctx.mailer.enqueue(
    { to, subject: r.subject, text: r.text, html: r.html },
    { kind: opts.kind ?? "account", ...opts },
  );
}

/**
 * Text a user chose (a shop's or a person's name) as it may appear in a mail body: on one line,
 * at most 80 characters, in quotes, and with anything that looks like a web address broken up so
 * mail programs do not turn it into a link (the HTML part is escaped by renderMail). Never used
 * in a subject: subjects carry no user-chosen text at all.
 */
export function quoted(userText: string): string {
  const oneLine = userText
    // eslint-disable-next-line no-control-regex -- control characters are exactly what is removed
    .replace(/[\u0000-\u001f\u007f\u2028\u2029]+/g, " ")
    .replace(/\s+/g, " ")
    .trim();
  const cut = oneLine.length > 80 ? `${oneLine.slice(0, 79)}…` : oneLine;
  const unlinked = cut
    .replace(/\b([a-z][a-z0-9+.-]*):\/\//gi, "$1 ")
    .replace(/\bwww\./gi, "www ")
    .replace(/([a-z0-9])\.(?=[a-z]{2,}\b)/gi, "$1 .");
  return `“${unlinked}”`;
}

/** The subject of every invitation mail: fixed text only. */
export const INVITE_SUBJECT = "A shop invited you to join Burnline";

/** "Hello Sam Ortega," with the name as the person typed it, made harmless (quoted() without quotes). */
function greeting(name: string): string {
  return `Hello ${quoted(name).slice(1, -1)},`;
}

export const mails = {
  verifyEmail: (name: string, url: string): MailContent => ({
    subject: "Confirm your e-mail address for Burnline",
    heading: greeting(name),
    lines: ["Please confirm that this is your e-mail address. You can sign in to Burnline once it is confirmed."],
    action: { label: "Confirm my e-mail address", url },
    footer: "The link works for 24 hours. If you did not sign up for Burnline, ignore this mail.",
  }),
  alreadyRegistered: (name: string, signInUrl: string, resetUrl: string): MailContent => ({
    subject: "You already have a Burnline account",
    heading: greeting(name),
    lines: [
      "Someone (probably you) tried to sign up for Burnline with this e-mail address, but it already has an account.",
      `Sign in at ${signInUrl}, or if you have forgotten the password, reset it at ${resetUrl}.`,
    ],
    action: { label: "Sign in", url: signInUrl },
    footer: "If this was not you, you can ignore this mail; nothing has changed.",
  }),
  resetPassword: (name: string, url: string): MailContent => ({
    subject: "Reset your Burnline password",
    heading: greeting(name),
    lines: [
      "We received a request to reset your password. Choose a new one with the link below.",
      "Resetting signs you out everywhere.",
    ],
    action: { label: "Choose a new password", url },
    footer:
      "The link works once, for 1 hour. If you did not ask for this, ignore this mail: your password stays as it is.",
  }),
  /**
   * Invitations: the subject is fixed (names chosen by users never appear in it); the body quotes
   * the shop's and the inviter's names as their owners typed them, marked as such.
   */
  invite: (shopName: string, inviterName: string, url: string): MailContent => ({
    subject: INVITE_SUBJECT,
    heading: "An invitation to join a shop on Burnline",
    lines: [
      `${quoted(inviterName)} invited you to join the shop ${quoted(shopName)} as a technician: ` +
        "you will open cases and send scope captures for a second opinion.",
      "The names above are as the shop's owner entered them; Burnline has not checked them.",
    ],
    action: { label: "Accept the invitation", url },
    footer: "The link works once, for 7 days. If you were not expecting this, ignore this mail.",
  }),
  /** An invitation to an address that already has an account: no acceptance link, nothing changes. */
  inviteExistingAccount: (shopName: string, inviterName: string, signInUrl: string): MailContent => ({
    subject: INVITE_SUBJECT,
    heading: "An invitation to join a shop on Burnline",
    lines: [
      `${quoted(inviterName)} invited this e-mail address to join the shop ${quoted(shopName)} ` +
        "on Burnline as a technician.",
      "This address already has a Burnline account, and an account belongs to one shop only, so the invitation can't be used and nothing has changed on your account.",
      "If you want to join that shop, ask whoever invited you to invite another e-mail address of yours. " +
        `To use your account as it is, sign in at ${signInUrl}.`,
      "The names above are as the shop's owner entered them; Burnline has not checked them.",
    ],
    footer: "If you were not expecting this, ignore this mail.",
  }),
  /** After a run of wrong passwords for the account (server/auth/sign-in-throttle.ts). */
  signInFailures: (name: string, resetUrl: string): MailContent => ({
    subject: "Failed sign-in attempts on your Burnline account",
    heading: greeting(name),
    lines: [
      "Someone has just tried several times to sign in to your Burnline account with a wrong password. " +
        "Further attempts now have to wait longer and longer between tries; your account is not locked " +
        "and you can still sign in with your password.",
      "If it was you, there is nothing to do. If it was not, your account is safe as long as your password " +
        "is not known to anyone else; to be sure, choose a new one.",
    ],
    action: { label: "Choose a new password", url: resetUrl },
    footer: "You receive this mail once for each run of failed attempts.",
  }),
  expertDecision: (name: string, approved: boolean, note: string | undefined, url: string): MailContent => ({
    subject: approved ? "Your Burnline expert application is approved" : "Your Burnline expert application",
    heading: greeting(name),
    lines: approved
      ? [
          "Your application to review cases on Burnline is approved. Sign in and set yourself available to start taking cases from the queue.",
        ]
      : [
          "Thank you for applying to review cases on Burnline. We are not able to approve your application at this time.",
        ],
    ...(note ? { footer: `Note from the desk: ${note}` } : {}),
    action: { label: "Open Burnline", url },
  }),
};

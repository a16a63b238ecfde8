/**
 * The mail adapter: nodemailer over SMTP — the local catcher (server/fakes/smtp.ts) in development,
 * the demo and tests, a real provider when SMTP settings come from the environment.
 */
import nodemailer from "nodemailer";

export interface MailerConfig {
  host: string;
  port: number;
  /** Implicit TLS (usually port 465). STARTTLS is used when the server offers it and secure is false. */
  secure?: boolean;
  user?: string;
  pass?: string;
  /** The From header, e.g. `Burnline <no-reply@burnline.test>`. */
  from: string;
  /** Require STARTTLS when secure is false (for real providers on 587). Default false. */
  requireTls?: boolean;
  /**
   * Keep one SMTP connection open and reuse it (nodemailer's pooled transport). The outbox
   * dispatcher sends one mail after another, and opening a connection per mail costs about
   * 100 ms even on this machine's own catcher. Default false.
   */
  pool?: boolean;
}

export interface OutgoingMail {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
  replyTo?: string;
}

export interface Mailer {
  send(mail: OutgoingMail): Promise<{ messageId: string }>;
  /** Checks the connection and credentials (SMTP EHLO/AUTH). */
  verify(): Promise<true>;
  close(): void;
}

export function createMailer(config: MailerConfig): Mailer {
  const transport = nodemailer.createTransport({
    ...(config.pool ? { pool: true as const, maxConnections: 1 } : {}),
    host: config.host,
    port: config.port,
    secure: config.secure ?? false,
    requireTLS: config.requireTls ?? false,
    auth: config.user ? { user: config.user, pass: config.pass ?? "" } : undefined,
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 20_000,
  });
  return {
    async send(mail) {
      const info = await transport.sendMail({
        from: config.from,
        to: mail.to,
        subject: mail.subject,
        text: mail.text,
        ...(mail.html ? { html: mail.html } : {}),
        ...(mail.replyTo ? { replyTo: mail.replyTo } : {}),
      });
      return { messageId: String(info.messageId) };
    },
    async verify() {
      await transport.verify();
      return true;
    },
    close() {
      transport.close();
    },
  };
}

function escapeHtml(value: string): string {
  return value
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    .replace(/'/g, "&#39;");
}

const PRODUCT = "Burnline";

/**
 * A plain mail in the product's neutral style: a title, paragraphs and an optional button link.
 * Returns the text and HTML parts (the HTML uses inline styles only, as mail clients require).
 */
export function renderMail(
  title: string,
  paragraphs: string[],
  action?: { label: string; url: string },
): { text: string; html: string } {
  if (action && !/^https?:\/\//i.test(action.url)) throw new Error("renderMail: action.url must be an http(s) URL");
  const text = [
    title,
    "",
    ...paragraphs.flatMap((p) => [p, ""]),
    ...(action ? [`${action.label}: ${action.url}`, ""] : []),
    `— ${PRODUCT}`,
    "",
  ].join("\n");

  const body = paragraphs
    .map((p) => `<p style="margin:0 0 14px;font-size:15px;line-height:1.5;color:#24292b;">${escapeHtml(p)}</p>`)
    .join("\n");
  const button = action
    ? `<p style="margin:22px 0;"><a href="${escapeHtml(action.url)}" style="display:inline-block;background:#1f4d46;color:#ffffff;text-decoration:none;font-weight:bold;font-size:15px;padding:11px 20px;border-radius:4px;">${escapeHtml(
        action.label,
      )}</a></p>
<p style="margin:0 0 14px;font-size:12px;line-height:1.5;color:#5b6466;">If the button does not work, open this address: <a href="${escapeHtml(
        action.url,
      )}" style="color:#1f4d46;">${escapeHtml(action.url)}</a></p>`
    : "";
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(
    title,
  )}</title></head>
<body style="margin:0;padding:0;background:#eef0ee;">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:#eef0ee;padding:24px 0;">
<tr><td align="center">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:560px;background:#ffffff;border-top:4px solid #1f4d46;font-family:Arial,Helvetica,sans-serif;">
<tr><td style="padding:22px 28px 6px;font-size:13px;font-weight:bold;letter-spacing:.08em;text-transform:uppercase;color:#1f4d46;">${PRODUCT}</td></tr>
<tr><td style="padding:4px 28px 24px;">
<h1 style="margin:0 0 16px;font-size:20px;line-height:1.3;color:#24292b;">${escapeHtml(title)}</h1>
${body}
${button}
</td></tr>
</table>
</td></tr>
</table>
</body></html>`;
  return { text, html };
}

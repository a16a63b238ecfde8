import { Router, type Request, type RequestHandler } from "express";
import path from "node:path";
import type { AppContext } from "../context";
import { listStoredMail, type CaughtMail } from "../fakes/smtp";
import { notFound } from "../http/errors";
import { notFoundHandler } from "../http/error-handler";

/** The development inbox exists outside production when no real SMTP server is configured. */
export const devMailEnabled = (ctx: AppContext) => ctx.env.NODE_ENV !== "production" && !ctx.env.SMTP_HOST;

/** The paths of the development inbox; outside its conditions each answers 404 like any unknown path. */
export const DEV_MAIL_PATHS = ["/api/dev/mail", "/dev/mail", "/dev/mail/:id"];

/**
 * A stored mail shown as sent runs in a sandbox (CSP Level 3 `sandbox` directive: a unique opaque
 * origin, no script, no forms), so HTML in a caught mail cannot act on the app's origin.
 */
export const MAIL_VIEW_CSP = "sandbox; default-src 'none'; img-src data:; style-src 'unsafe-inline'";

const LOOPBACK = new Set(["127.0.0.1", "::1", "::ffff:127.0.0.1"]);

/**
 * True when the request comes from this machine: the TCP peer is a loopback address and no proxy
 * header names anyone else. The inbox holds password-reset, verification and invitation links, so
 * it must not answer another machine on the network, signed in or not.
 */
export function fromLoopback(req: Request): boolean {
  if (!LOOPBACK.has(req.socket.remoteAddress ?? "")) return false;
  const named: string[] = [];
  for (const v of ([] as string[]).concat(req.headers["x-forwarded-for"] ?? [])) named.push(...v.split(","));
  // RFC 7239 §4: Forwarded: for=192.0.2.60;proto=http, for="[2001:db8:cafe::17]:4711"
  for (const m of (req.headers.forwarded ?? "").matchAll(/for=("[^"]*"|[^;,\s]*)/gi)) named.push(m[1]);
  const realIp = req.headers["x-real-ip"];
  if (typeof realIp === "string") named.push(realIp);
  return named.every((a) => LOOPBACK.has(bareAddress(a)));
}

/** `"[::1]:4711"` → `::1`, `127.0.0.1:80` → `127.0.0.1`; anything else trimmed as it is. */
function bareAddress(a: string): string {
  const v = a.trim().replace(/^"(.*)"$/, "$1");
  const v6 = /^\[([^\]]+)\](?::\d+)?$/.exec(v);
  if (v6) return v6[1];
  const v4 = /^(\d{1,3}(?:\.\d{1,3}){3}):\d+$/.exec(v);
  return v4 ? v4[1] : v;
}

/**
 * The development inbox: mails caught by the local SMTP catcher (stored under DATA_DIR/mail),
 * as JSON at GET /api/dev/mail and as a page at /dev/mail with clickable links. Only outside
 * production, only when no real SMTP server is configured, and only to clients on this machine
 * (loopback); otherwise these paths answer 404 as if they did not exist (also in front of the
 * client's catch-all page).
 */
export function devMailRoutes(ctx: AppContext): Router {
  const r = Router();
  const enabled = devMailEnabled(ctx);
  const gate: RequestHandler = (req, res, next) => {
    if (!enabled || ctx.env.NODE_ENV === "production" || !fromLoopback(req)) return notFoundHandler(req, res, next);
    res.set("Cache-Control", "no-store");
    next();
  };
  r.all(DEV_MAIL_PATHS, gate);
  if (!enabled) return r;
  const dir = path.join(ctx.env.dataDir, "mail");
  const newestFirst = () => listStoredMail(dir).reverse();

  r.get("/api/dev/mail", (_req, res) => {
    res.json({ mails: newestFirst() });
  });

  r.get("/dev/mail", (_req, res) => {
    res.type("html").send(inboxPage(newestFirst()));
  });

  r.get("/dev/mail/:id", (req, res) => {
    const mail = listStoredMail(dir).find((m) => m.id === req.params.id);
    if (!mail) throw notFound("Mail");
    res.set("Content-Security-Policy", MAIL_VIEW_CSP);
    if (mail.html) res.type("html").send(mail.html);
    else res.type("text").send(mail.text);
  });

  return r;
}

const esc = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);

function inboxPage(mails: CaughtMail[]): string {
  const items = mails
    .map(
      (m) => `<li class="mail">
  <div class="meta"><span class="to">To: ${esc(m.to.join(", "))}</span><time datetime="${esc(m.date)}">${esc(m.date.replace("T", " ").slice(0, 19))} UTC</time></div>
  <h2>${esc(m.subject || "(no subject)")}</h2>
  ${m.links.length ? `<ul class="links">${m.links.map((l) => `<li><a href="${esc(l)}">${esc(l.length > 90 ? l.slice(0, 90) + "…" : l)}</a></li>`).join("")}</ul>` : ""}
  <details><summary>Text</summary><pre>${esc(m.text)}</pre></details>
  <p><a class="view" href="/dev/mail/${esc(m.id)}">View as sent</a></p>
</li>`,
    )
    .join("\n");
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Caught mail · Burnline (development)</title>
<style>
body{margin:0;font-family:system-ui,sans-serif;background:#f8f6f1;color:#1e2a32}
header{background:#1e2a32;color:#f4f6f7;padding:12px 16px}header b span{color:#d4831f}
main{max-width:860px;margin:0 auto;padding:16px}
.note{color:#435562;font-size:14px}
ul.list{list-style:none;padding:0;margin:0}
.mail{background:#fff;border:1px solid #c9d3d9;border-radius:10px;padding:12px 14px;margin:0 0 12px}
.meta{display:flex;flex-wrap:wrap;gap:4px 16px;font-size:13px;color:#566b77}
h2{font-size:17px;margin:6px 0}
.links{padding-left:18px;margin:6px 0}
a{color:#924a14;word-break:break-all}a:focus-visible{outline:3px solid #e9a23b;outline-offset:2px}
pre{white-space:pre-wrap;font-size:13px;background:#f4f6f7;padding:8px;border-radius:6px}
</style></head>
<body><header><b>Burn<span>line</span></b> · caught mail (development only)</header>
<main>
<p class="note">Mails the local SMTP catcher received, newest first. Nothing here left this machine. Reload the page to see new mail.</p>
${mails.length ? `<ul class="list">${items}</ul>` : `<p>No mail yet. Sign up a shop or ask for a password reset, then reload.</p>`}
</main></body></html>`;
}

/**
 * A local SMTP catcher for development, the demo and tests: accepts every message over plain SMTP
 * on loopback (no TLS, any or no AUTH), parses it with mailparser and keeps it in memory and, when
 * storeDir is given, as one JSON file per message so the development inbox page can list them.
 */
import { randomUUID } from "node:crypto";
import { mkdirSync, readdirSync, readFileSync, renameSync, writeFileSync, rmSync } from "node:fs";
import type { AddressInfo } from "node:net";
import { join } from "node:path";
import { simpleParser, type AddressObject } from "mailparser";
import { SMTPServer } from "smtp-server";

export interface CaughtMail {
  id: string;
  /** Envelope recipients (RCPT TO), lower-cased. Includes Bcc recipients. */
  to: string[];
  /** The From header as text, e.g. `Burnline <no-reply@burnline.test>`. */
  from: string;
  subject: string;
  text: string;
  html: string;
  /** ISO 8601, the time the catcher received the message. */
  date: string;
  /** Distinct http(s) links found in the HTML (href) and the text part, in order of appearance. */
  links: string[];
  messageId: string | null;
}

export interface MailCatcherOptions {
  /** 0 (default) picks a free port. */
  port?: number;
  /** Default 127.0.0.1. */
  host?: string;
  /** Directory for one `<id>.json` per message; existing files are loaded at start. */
  storeDir?: string;
  /** Accept connections from non-loopback addresses (default false). */
  allowRemote?: boolean;
  /** Largest accepted message, bytes. Default 10 MiB. */
  maxMessageBytes?: number;
}

export interface MailCatcher {
  readonly host: string;
  readonly port: number;
  close(): Promise<void>;
  /** Caught messages, oldest first. */
  messages(): CaughtMail[];
  get(id: string): CaughtMail | undefined;
  /** Resolves with the first message (already caught or arriving later) that matches. */
  waitFor(predicate: (mail: CaughtMail) => boolean, timeoutMs?: number): Promise<CaughtMail>;
  /** Forget every message (and delete the stored files). */
  clear(): void;
}

const LOOPBACK = /^(127\.|::1$|::ffff:127\.)/;

/** http(s) links of a message: href values first (HTML decoded), then bare URLs in the text. */
export function extractLinks(html: string, text: string): string[] {
  const seen = new Set<string>();
  const add = (raw: string) => {
    const url = raw
      .replace(/&amp;/g, "&")
      .replace(/&#x2F;/gi, "/")
      .replace(/&#47;/g, "/")
      .replace(/&quot;/g, '"')
      .trim();
    if (/^https?:\/\//i.test(url)) seen.add(url);
  };
  for (const m of html.matchAll(/\bhref\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s>]+))/gi)) add(m[1] ?? m[2] ?? m[3] ?? "");
  for (const m of text.matchAll(/https?:\/\/[^\s<>"'\])]+/gi)) add(m[0].replace(/[.,;:!?]+$/, ""));
  return [...seen];
}

function addressText(a: AddressObject | AddressObject[] | undefined): string {
  if (!a) return "";
  return (Array.isArray(a) ? a : [a])
    .flatMap((x) => x.value)
    .map((v) => (v.name ? `${v.name} <${v.address ?? ""}>` : (v.address ?? "")))
    .join(", ");
}

/** Read the messages a catcher stored in storeDir (for the development inbox page). */
export function listStoredMail(storeDir: string): CaughtMail[] {
  let files: string[];
  try {
    files = readdirSync(storeDir).filter((f) => f.endsWith(".json"));
  } catch {
    return [];
  }
  const out: CaughtMail[] = [];
  for (const f of files) {
    try {
      out.push(JSON.parse(readFileSync(join(storeDir, f), "utf8")) as CaughtMail);
    } catch {
      // A half-written or foreign file: skip it.
    }
  }
  return out.sort((a, b) => a.date.localeCompare(b.date) || a.id.localeCompare(b.id));
}

export async function startMailCatcher(options: MailCatcherOptions = {}): Promise<MailCatcher> {
  const host = options.host ?? "127.0.0.1";
  const storeDir = options.storeDir;
  const mails: CaughtMail[] = storeDir ? listStoredMail(storeDir) : [];
  if (storeDir) mkdirSync(storeDir, { recursive: true });
  const listeners = new Set<(m: CaughtMail) => void>();

  const server = new SMTPServer({
    secure: false,
    disabledCommands: ["STARTTLS"],
    authOptional: true,
    allowInsecureAuth: true,
    logger: false,
    banner: "Burnline local mail catcher",
    size: options.maxMessageBytes ?? 10 * 1024 * 1024,
    onConnect(session, callback) {
      if (!options.allowRemote && !LOOPBACK.test(session.remoteAddress)) {
        return callback(new Error("Only loopback connections are accepted"));
      }
      callback();
    },
    onAuth(auth, _session, callback) {
      callback(null, { user: auth.username ?? "any" });
    },
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
            const err = new Error("Message exceeds the size limit") as Error & { responseCode?: number };
            err.responseCode = 552;
            return callback(err);
          }
          const html = typeof parsed.html === "string" ? parsed.html : "";
          const text = parsed.text ?? "";
          const mail: CaughtMail = {
            id: randomUUID(),
            to: session.envelope.rcptTo.map((r) => r.address.toLowerCase()),
            from: addressText(parsed.from),
            subject: parsed.subject ?? "",
            text,
            html,
            date: new Date().toISOString(),
            links: extractLinks(html, text),
            messageId: parsed.messageId ?? null,
          };
          mails.push(mail);
          if (storeDir) {
            const file = join(storeDir, `${mail.id}.json`);
            writeFileSync(`${file}.tmp`, JSON.stringify(mail, null, 2));
            renameSync(`${file}.tmp`, file);
          }
          for (const l of [...listeners]) l(mail);
          callback();
        })
        .catch((err: Error) => callback(err));
    },
  });
  // Client errors (a dropped connection) must not crash the process.
  server.on("error", () => {});

  await new Promise<void>((resolve, reject) => {
    const onError = (e: Error) => reject(e);
    server.server.once("error", onError);
    server.listen(options.port ?? 0, host, () => {
      server.server.off("error", onError);
      resolve();
    });
  });
  const port = (server.server.address() as AddressInfo).port;

  return {
    host,
    port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
    messages: () => [...mails],
    get: (id) => mails.find((m) => m.id === id),
    waitFor(predicate, timeoutMs = 5000) {
      const found = mails.find(predicate);
      if (found) return Promise.resolve(found);
      return new Promise<CaughtMail>((resolve, reject) => {
        const listener = (m: CaughtMail) => {
          if (!predicate(m)) return;
          clearTimeout(timer);
          listeners.delete(listener);
          resolve(m);
        };
        const timer = setTimeout(() => {
          listeners.delete(listener);
          const seen = mails.map((m) => `"${m.subject}" → ${m.to.join(", ")}`).join("; ") || "none";
          reject(new Error(`waitFor: no matching mail within ${timeoutMs} ms (caught: ${seen})`));
        }, timeoutMs);
        listeners.add(listener);
      });
    },
    clear() {
      if (storeDir) for (const m of mails) rmSync(join(storeDir, `${m.id}.json`), { force: true });
      mails.length = 0;
    },
  };
}

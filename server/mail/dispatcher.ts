/**
 * The outbox dispatcher: sends the rows of `mail_outbox` over SMTP, oldest first, one at a time.
 * It is woken after a request that queued mail has been answered (server/http/after-response.ts)
 * and also looks every `pollMs` for retries that came due and rows other processes queued.
 *
 * Each row is claimed with a conditional update before it is sent and marked sent only by its
 * claimant, so two dispatchers on one database — in one process or on several nodes sharing a
 * libSQL server — never send one row twice. Every node runs one; each polls, and the node that
 * queued a mail wakes its own at once. A failed attempt is
 * retried with exponential backoff (base × 2^(attempt−1), ±20 % jitter, capped); a permanent SMTP
 * refusal (5xx reply) or the last attempt gives the row up. A claim older than `leaseMs` (its
 * dispatcher died in mid-send) is taken back; that is the one case where a mail may go out twice.
 */
import type { Logger } from "pino";
import type { Db } from "../db/client";
import { claimRow, dueRows, markFailed, markSent, nextDueAt, pruneOutbox, unsentCount, type OutboxRow } from "./outbox";

export interface MailTransport {
  send(mail: {
    to: string;
    subject: string;
    text: string;
    html?: string;
    replyTo?: string;
  }): Promise<{ messageId: string }>;
}

export interface DispatcherOptions {
  db: Db;
  transport: MailTransport;
  logger: Logger;
  /** a name for this dispatcher in claims (default: a random id) */
  id?: string;
  /** how often to look for due rows without being woken; default 2 s */
  pollMs?: number;
  /** first retry delay; default 2 s */
  baseDelayMs?: number;
  /** longest retry delay; default 10 min */
  maxDelayMs?: number;
  /** attempts before a row is given up; default 8 (about 8 minutes of retries with the defaults) */
  maxAttempts?: number;
  /** a `sending` claim older than this is taken back; default 10 min (far above the SMTP timeouts) */
  leaseMs?: number;
  /** the clock (wall time; not ctx.now, which tests and the demo seed move) */
  now?: () => Date;
  /** 0..1 random source for the jitter */
  random?: () => number;
}

export interface MailDispatcher {
  readonly id: string;
  /** Look for due rows now (or right after the current pass). */
  kick(): void;
  /** One pass over the due rows; resolves with how many were sent. */
  runOnce(): Promise<number>;
  /** Resolves when no row is pending or sending (or after timeoutMs, rejecting). */
  drain(timeoutMs?: number): Promise<void>;
  /** Stops the timers and waits for the mail being sent, if any. */
  stop(): Promise<void>;
}

const DAY = 24 * 3600 * 1000;

export function retryDelayMs(
  attempt: number,
  o: { baseDelayMs: number; maxDelayMs: number },
  random: () => number,
): number {
  const raw = Math.min(o.maxDelayMs, o.baseDelayMs * 2 ** Math.max(0, attempt - 1));
  return Math.round(raw * (0.8 + 0.4 * random()));
}

/** A 5xx SMTP reply is a permanent refusal (RFC 5321 §4.2.1); anything else may pass on a later try. */
function permanent(err: unknown): boolean {
  const code = Number((err as { responseCode?: number })?.responseCode);
  return code >= 500 && code < 600;
}

export function startMailDispatcher(opts: DispatcherOptions): MailDispatcher {
  const id = opts.id ?? `dispatcher-${crypto.randomUUID().slice(0, 8)}`;
  const cfg = {
    pollMs: opts.pollMs ?? 2000,
    baseDelayMs: opts.baseDelayMs ?? 2000,
    maxDelayMs: opts.maxDelayMs ?? 10 * 60_000,
    maxAttempts: opts.maxAttempts ?? 8,
    leaseMs: opts.leaseMs ?? 10 * 60_000,
  };
  const now = opts.now ?? (() => new Date());
  const random = opts.random ?? Math.random;
  const log = opts.logger;
  const db = opts.db;
  let stopped = false;
  let running: Promise<void> | null = null;
  let again = false;
  let timer: NodeJS.Timeout | null = null;
  let lastPrune = 0;

  async function sendOne(row: OutboxRow): Promise<boolean> {
    try {
      const info = await opts.transport.send({
        to: row.toAddress,
        subject: row.subject,
        text: row.textBody ?? "",
        ...(row.htmlBody ? { html: row.htmlBody } : {}),
        ...(row.replyTo ? { replyTo: row.replyTo } : {}),
      });
      if (!(await db.write((tx) => markSent(tx, row.id, id, info.messageId, now()))))
        log.warn({ mailId: row.id }, "mail sent, but its claim had been taken over");
      else log.debug({ mailId: row.id, kind: row.kind }, "mail sent");
      return true;
    } catch (err) {
      const giveUp = permanent(err) || row.attempts >= cfg.maxAttempts;
      const retryAt = giveUp ? null : new Date(now().getTime() + retryDelayMs(row.attempts, cfg, random));
      const why = String((err as Error)?.message ?? err).slice(0, 500);
      await db.write((tx) => markFailed(tx, row.id, id, why, retryAt));
      if (giveUp) log.error({ err, mailId: row.id, kind: row.kind, attempts: row.attempts }, "mail given up");
      else
        log.warn({ err, mailId: row.id, kind: row.kind, attempts: row.attempts, retryAt }, "mail not sent; will retry");
      return false;
    }
  }

  async function runOnce(): Promise<number> {
    let sent = 0;
    for (;;) {
      const t = now();
      const stale = new Date(t.getTime() - cfg.leaseMs);
      const ids = await db.read((tx) => dueRows(tx, t, stale, 20));
      let claimed = 0;
      for (const rowId of ids) {
        if (stopped) return sent;
        const row = await db.write((tx) => claimRow(tx, rowId, id, now(), stale));
        if (!row) continue;
        claimed++;
        if (await sendOne(row)) sent++;
      }
      if (ids.length < 20 || claimed === 0) break;
    }
    if (now().getTime() - lastPrune > 3600_000) {
      lastPrune = now().getTime();
      const removed = await db.write((tx) => pruneOutbox(tx, new Date(lastPrune - 7 * DAY)));
      if (removed) log.debug({ removed }, "old outbox rows removed");
    }
    return sent;
  }

  async function schedule() {
    if (stopped) return;
    let due: Date | null = null;
    try {
      due = await db.read((tx) => nextDueAt(tx));
    } catch (err) {
      log.error({ err }, "mail dispatcher could not read the outbox");
    }
    if (stopped) return;
    if (timer) clearTimeout(timer);
    const wait = due ? Math.max(0, Math.min(cfg.pollMs, due.getTime() - now().getTime())) : cfg.pollMs;
    timer = setTimeout(kick, wait);
    timer.unref();
  }

  function kick() {
    if (stopped) return;
    if (running) {
      again = true;
      return;
    }
    running = (async () => {
      do {
        again = false;
        try {
          await runOnce();
        } catch (err) {
          log.error({ err }, "mail dispatcher pass failed");
        }
      } while (again && !stopped);
    })().finally(() => {
      running = null;
      void schedule();
    });
  }

  async function drain(timeoutMs = 10_000): Promise<void> {
    const until = Date.now() + timeoutMs;
    while ((await db.read((tx) => unsentCount(tx))) > 0) {
      if (Date.now() > until) throw new Error(`mail outbox not drained within ${timeoutMs} ms`);
      kick();
      await (running ?? new Promise((r) => setTimeout(r, 25)));
      await new Promise((r) => setTimeout(r, 5));
    }
  }

  void schedule();
  return {
    id,
    kick,
    runOnce,
    drain,
    async stop() {
      stopped = true;
      if (timer) clearTimeout(timer);
      await running;
    },
  };
}

/**
 * Signed webhook delivery with Stripe's scheme (docs.stripe.com/webhooks#verify-manually):
 * header `Stripe-Signature: t=<unix seconds>,v1=<hex HMAC-SHA256 of "<t>.<raw body>" keyed with the
 * endpoint secret>`. stripe-node verifies exactly this (node_modules/stripe/esm/Webhooks.js,
 * makeHMACContent and parseHeader). Each attempt is signed afresh with the current wall-clock time.
 *
 * Delivery runs in the background (never inside an API response), each event independently, so the
 * receiver sees them concurrently and in no guaranteed order, as with Stripe. A non-2xx answer, a
 * redirect, a timeout or a refused connection is retried with exponential back-off
 * (baseMs · 2^(attempt−1), capped at maxDelayMs) up to maxAttempts attempts.
 */
import { createHmac } from "node:crypto";
import type { EventObject } from "./types";

export interface RetryPolicy {
  /** Delay before the 2nd attempt; doubles after each failure. */
  baseMs: number;
  /** Attempts in total, the first included. */
  maxAttempts: number;
  /** Upper bound of one delay. */
  maxDelayMs?: number;
}

export interface DeliveryAttempt {
  eventId: string;
  eventType: string;
  attempt: number;
  url: string;
  /** HTTP status, or null when no answer came (connection refused, timeout). */
  status: number | null;
  ok: boolean;
  error?: string;
  /** The first 500 characters of the receiver's answer. */
  responseBody?: string;
  signature: string;
  startedAt: number;
  durationMs: number;
  /** True for a one-off delivery made with redeliver() (not part of the retry schedule). */
  manual?: boolean;
  /** When this attempt failed and another follows: the back-off delay scheduled before it, ms. */
  retryInMs?: number;
}

export function signPayload(payload: string, secret: string, timestampSeconds = Math.floor(Date.now() / 1000)): string {
  const v1 = createHmac("sha256", secret).update(`${timestampSeconds}.${payload}`, "utf8").digest("hex");
  return `t=${timestampSeconds},v1=${v1}`;
}

/** The JSON body Stripe posts: the event object, pretty-printed. */
export function eventPayload(event: EventObject): string {
  return JSON.stringify(event, null, 2);
}

interface Job {
  event: EventObject;
  payload: string;
  url: string;
  attempt: number;
  timer?: NodeJS.Timeout;
}

export class WebhookDispatcher {
  readonly deliveries: DeliveryAttempt[] = [];
  private pending = 0;
  private waiters: Array<() => void> = [];
  private held: Job[] | null = null;
  private readonly timers = new Set<NodeJS.Timeout>();
  private readonly controllers = new Set<AbortController>();
  private closed = false;

  constructor(
    private readonly opts: {
      secret: string;
      retry: RetryPolicy;
      timeoutMs: number;
      log?: (line: string) => void;
    },
  ) {}

  /** Queue an event for delivery to url (captured now, like an endpoint registered at event time). */
  enqueue(event: EventObject, url: string): void {
    if (this.closed) return;
    const job: Job = { event, payload: eventPayload(event), url, attempt: 0 };
    if (this.held) {
      this.held.push(job);
      return;
    }
    this.start(job);
  }

  /** Keep new events queued (not delivered) until releaseDeliveries(). idle() ignores held events. */
  hold(): void {
    if (!this.held) this.held = [];
  }

  /** Deliver the held events, in creation order or reversed, each with the normal retry schedule. */
  release(opts: { reverse?: boolean } = {}): void {
    const jobs = this.held ?? [];
    this.held = null;
    if (opts.reverse) jobs.reverse();
    for (const job of jobs) this.start(job);
  }

  private start(job: Job): void {
    this.pending++;
    // Always off the current call stack: the API response is written first.
    const t = setTimeout(() => {
      this.timers.delete(t);
      void this.attempt(job);
    }, 0);
    this.timers.add(t);
  }

  private async attempt(job: Job): Promise<void> {
    if (this.closed) return this.finish();
    job.attempt++;
    const record = await this.post(job.url, job.payload, job.event, job.attempt);
    const willRetry = !record.ok && !this.closed && job.attempt < this.opts.retry.maxAttempts;
    const delay = Math.min(
      this.opts.retry.baseMs * 2 ** (job.attempt - 1),
      this.opts.retry.maxDelayMs ?? 60 * 60 * 1000,
    );
    if (willRetry) record.retryInMs = delay;
    this.deliveries.push(record);
    this.opts.log?.(
      `webhook ${job.event.type} ${job.event.id} attempt ${job.attempt} → ${record.status ?? record.error ?? "no answer"}`,
    );
    if (!willRetry) return this.finish();
    const t = setTimeout(() => {
      this.timers.delete(t);
      void this.attempt(job);
    }, delay);
    this.timers.add(t);
  }

  private async post(
    url: string,
    payload: string,
    event: EventObject,
    attempt: number,
    overrides: { signature?: string; timestamp?: number } = {},
  ): Promise<DeliveryAttempt> {
    const signature = overrides.signature ?? signPayload(payload, this.opts.secret, overrides.timestamp);
    const controller = new AbortController();
    this.controllers.add(controller);
    const timer = setTimeout(() => controller.abort(), this.opts.timeoutMs);
    const startedAt = Date.now();
    const base = { eventId: event.id, eventType: event.type, attempt, url, signature, startedAt };
    try {
      const res = await fetch(url, {
        method: "POST",
        headers: {
          "content-type": "application/json; charset=utf-8",
          "stripe-signature": signature,
          "user-agent": "Stripe/1.0 (+https://stripe.com/docs/webhooks)",
          "cache-control": "no-cache",
        },
        body: payload,
        redirect: "manual",
        signal: controller.signal,
      });
      const text = await res.text().catch(() => "");
      const ok = res.status >= 200 && res.status < 300;
      return { ...base, status: res.status, ok, responseBody: text.slice(0, 500), durationMs: Date.now() - startedAt };
    } catch (err) {
      const e = err as Error & { cause?: { code?: string } };
      const error = controller.signal.aborted ? "timeout" : (e.cause?.code ?? e.message);
      return { ...base, status: null, ok: false, error, durationMs: Date.now() - startedAt };
    } finally {
      clearTimeout(timer);
      this.controllers.delete(controller);
    }
  }

  /** One extra delivery of an event (no retries), optionally with a forged signature or timestamp. */
  async redeliver(
    event: EventObject,
    url: string,
    overrides: { signature?: string; timestamp?: number; payload?: string } = {},
  ): Promise<DeliveryAttempt> {
    this.pending++;
    try {
      const record = await this.post(url, overrides.payload ?? eventPayload(event), event, 0, overrides);
      record.manual = true;
      this.deliveries.push(record);
      return record;
    } finally {
      this.finish();
    }
  }

  private finish(): void {
    this.pending = Math.max(0, this.pending - 1);
    if (this.pending === 0) {
      const waiters = this.waiters;
      this.waiters = [];
      for (const w of waiters) w();
    }
  }

  /** Resolves when no delivery is in flight or waiting for a retry. */
  idle(): Promise<void> {
    if (this.pending === 0) return Promise.resolve();
    return new Promise((resolve) => this.waiters.push(resolve));
  }

  close(): void {
    this.closed = true;
    for (const t of this.timers) clearTimeout(t);
    this.timers.clear();
    for (const c of this.controllers) c.abort();
    this.pending = 0;
    this.held = null;
    const waiters = this.waiters;
    this.waiters = [];
    for (const w of waiters) w();
  }
}

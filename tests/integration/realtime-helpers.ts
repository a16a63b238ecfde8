/**
 * Helpers of the live-review tests and benchmark: a claimed case with a trace, real socket.io
 * clients carrying a session cookie, and promise wrappers around acknowledged events.
 */
import { io as connectClient, type Socket } from "socket.io-client";
import { schema } from "../../server/db/client";
import type { AppContext } from "../../server/context";
import type { ClientToServerEvents, ServerToClientEvents } from "../../shared/realtime";

export type LiveClient = Socket<ServerToClientEvents, ClientToServerEvents>;

export interface LiveCase {
  caseId: string;
  traceId: string;
}

/**
 * Inserts a case of `shopId` in `status` (default "claimed" by `expertId`) with one trace row of a
 * 0.1 s capture on channel "A". The trace's data files are not written: the live layer only reads
 * the row (time span and channels).
 */
export async function insertLiveCase(
  ctx: Pick<AppContext, "db" | "now">,
  opts: { shopId: string; createdBy: string; expertId?: string | null; status?: string },
): Promise<LiveCase> {
  const now = ctx.now();
  const caseId = crypto.randomUUID();
  const traceId = crypto.randomUUID();
  await ctx.db.write((tx) =>
    tx
      .insert(schema.caseTable)
      .values({
        id: caseId,
        shopId: opts.shopId,
        createdBy: opts.createdBy,
        status: opts.status ?? (opts.expertId ? "claimed" : "draft"),
        make: "Veltra",
        model: "Sorrel",
        year: 2019,
        complaint: "Misfire on cylinder 4 under load",
        expertId: opts.expertId ?? null,
        claimedAt: opts.expertId ? now : null,
        createdAt: now,
        updatedAt: now,
      })
      .run(),
  );
  await ctx.db.write((tx) =>
    tx
      .insert(schema.trace)
      .values({
        id: traceId,
        caseId,
        uploadedBy: opts.createdBy,
        name: "cyl4-secondary.csv",
        kind: "secondary-ignition",
        settings: { kind: "secondary-ignition", voltsPerDiv: 5, timePerDivS: 0.01 },
        sha256: "0".repeat(64),
        originalBytes: 1,
        originalPath: "originals/none",
        dataPath: "traces/none",
        samples: 10_000,
        sampleRateHz: 100_000,
        t0: 0,
        durationS: 0.1,
        channels: [{ name: "A", unit: "V", min: -5, max: 30 }],
        createdAt: now,
      })
      .run(),
  );
  return { caseId, traceId };
}

export interface ConnectOptions {
  cookie?: string;
  /** default: the server's own origin */
  origin?: string | null;
  reconnection?: boolean;
  reconnectionDelay?: number;
}

/** A socket.io client on loopback, not yet connected (call `.connect()` or use `connected()`). */
export function liveClient(url: string, opts: ConnectOptions = {}): LiveClient {
  const headers: Record<string, string> = {};
  if (opts.cookie) headers.cookie = opts.cookie;
  const origin = opts.origin === undefined ? new URL(url).origin : opts.origin;
  if (origin) headers.origin = origin;
  return connectClient(url, {
    transports: ["websocket"],
    forceNew: true,
    autoConnect: false,
    extraHeaders: headers,
    reconnection: opts.reconnection ?? false,
    reconnectionDelay: opts.reconnectionDelay ?? 50,
    reconnectionDelayMax: opts.reconnectionDelay ?? 50,
    timeout: 5000,
  }) as LiveClient;
}

/** Connects and resolves once connected; rejects with the server's connect_error. */
export function connected(s: LiveClient): Promise<LiveClient> {
  return new Promise((resolve, reject) => {
    const ok = () => {
      s.off("connect_error", bad);
      resolve(s);
    };
    const bad = (err: Error) => {
      s.off("connect", ok);
      reject(err);
    };
    s.once("connect", ok);
    s.once("connect_error", bad);
    s.connect();
  });
}

/** Emits an acknowledged event and resolves with the acknowledgement (rejects after `timeoutMs`). */
export function ask<E extends keyof ClientToServerEvents>(
  s: LiveClient,
  event: E,
  payload: Parameters<ClientToServerEvents[E]>[0],
  timeoutMs = 10_000,
): Promise<Parameters<Extract<Parameters<ClientToServerEvents[E]>[1], (...a: never[]) => void>>[0]> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`no acknowledgement of ${event}`)), timeoutMs);
    (s.emit as unknown as (e: E, p: unknown, ack: (res: never) => void) => void)(event, payload, (res) => {
      clearTimeout(timer);
      resolve(res);
    });
  });
}

/** Resolves when `pred` becomes true, polling every 10 ms; rejects after `ms`. */
export async function until(pred: () => boolean, ms = 5000, what = "condition"): Promise<void> {
  const end = Date.now() + ms;
  while (!pred()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 10));
  }
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * The shared Redis of several nodes (REDIS_URL): the socket.io streams adapter, presence and the
 * BullMQ queues use it. Each user gets its own connection (`connection()`), all closed by `close()`.
 * Without REDIS_URL there is none and everything stays in the process (one node).
 */
import os from "node:os";
import { Redis, type RedisOptions } from "ioredis";
import type { Logger } from "pino";

export interface SharedRedis {
  readonly url: string;
  /** this process's name among the nodes (in presence entries and logs) */
  readonly nodeId: string;
  /** the connection for plain commands */
  readonly client: Redis;
  /** a further connection (blocking reads, subscriptions, BullMQ workers need their own) */
  connection(opts?: RedisOptions): Redis;
  close(): Promise<void>;
}

/** Connects to REDIS_URL; resolves once the first connection answers. */
export async function connectRedis(url: string, logger: Logger): Promise<SharedRedis> {
  const nodeId = `${os.hostname()}:${process.pid}:${crypto.randomUUID().slice(0, 8)}`;
  const all = new Set<Redis>();
  const make = (opts: RedisOptions = {}) => {
    const r = new Redis(url, { lazyConnect: false, connectionName: `burnline:${nodeId}`, ...opts });
    r.on("error", (err) => logger.warn({ err: err.message }, "redis connection error"));
    all.add(r);
    r.once("end", () => all.delete(r));
    return r;
  };
  const client = make();
  try {
    await client.ping();
  } catch (err) {
    client.disconnect();
    throw new Error(`Redis at ${url} does not answer: ${(err as Error).message}`, { cause: err });
  }
  return {
    url,
    nodeId,
    client,
    connection: make,
    async close() {
      await Promise.all(
        [...all].map(async (r) => {
          try {
            await r.quit();
          } catch {
            r.disconnect();
          }
        }),
      );
    },
  };
}

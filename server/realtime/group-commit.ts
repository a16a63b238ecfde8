/**
 * Group commit for the socket writes. Every write that arrives during one turn of the event loop
 * runs, in arrival order, inside one `BEGIN IMMEDIATE` transaction, each in its own savepoint (a
 * refused write rolls back alone); the transaction commits once (one fsync under
 * synchronous=FULL), and only then is each write's callback called, in the same order — so
 * acknowledgements and broadcasts leave after the commit and in seq order.
 *
 * A lone write waits only for the next check phase (setImmediate); under load this turns one fsync
 * per annotation into one per batch.
 */
import type { Db } from "../db/client";

/** A job runs its statements on the database's connection, inside the open transaction and its savepoint. */
interface Job<R> {
  run: () => R;
  done: (err: unknown, result?: R) => void;
}

export interface GroupCommit {
  /** queues `run`; `done` is called after the commit (or with the error that refused it) */
  enqueue<R>(run: () => R, done: (err: unknown, result?: R) => void): void;
  /** runs what is queued now (used by close) */
  flush(): void;
}

export function groupCommit(db: Db, opts: { maxBatch?: number; onError?: (err: unknown) => void } = {}): GroupCommit {
  const maxBatch = opts.maxBatch ?? 256;
  let queue: Job<unknown>[] = [];
  let scheduled: ReturnType<typeof setImmediate> | null = null;

  function flush(): void {
    scheduled = null;
    while (queue.length) {
      const batch = queue.slice(0, maxBatch);
      queue = queue.slice(batch.length);
      const results: { err?: unknown; value?: unknown; failed: boolean }[] = [];
      try {
        db.transaction(
          (tx) => {
            for (const job of batch) {
              try {
                results.push({ value: tx.transaction(() => job.run()), failed: false });
              } catch (err) {
                results.push({ err, failed: true });
              }
            }
          },
          { behavior: "immediate" },
        );
      } catch (err) {
        // the commit itself failed: nothing of this batch is stored
        opts.onError?.(err);
        for (const job of batch) safe(() => job.done(err));
        continue;
      }
      batch.forEach((job, i) => {
        const r = results[i];
        safe(() => (r.failed ? job.done(r.err) : job.done(null, r.value)));
      });
    }
  }

  function safe(fn: () => void): void {
    try {
      fn();
    } catch (err) {
      opts.onError?.(err);
    }
  }

  return {
    enqueue(run, done) {
      queue.push({ run, done } as Job<unknown>);
      scheduled ??= setImmediate(flush);
    },
    flush() {
      if (scheduled) clearImmediate(scheduled);
      flush();
    },
  };
}

/**
 * Group commit for the live writes. Every write that arrives while the previous batch is being
 * committed (or during one turn of the event loop) goes into the next batch: the writes' plans
 * (./writes.ts), in arrival order, as one `db.batch` — one transaction and, on a libSQL server,
 * one round trip however many writes it holds; the seqs are taken in that order. Only then is each
 * write's callback called, in the same order.
 *
 * A batch that fails (a guard no longer holds, a clientId sent twice at once, a lost connection)
 * stores nothing; its writes are then run one by one on their exact path, each in a unit of its
 * own, so each gets its own answer — stored, a stored retry, or its refusal. One batch is in
 * flight at a time per node, so this node's seqs are taken in arrival order.
 */
import type { Db, Statement } from "../db/client";
import type { WritePlan } from "./writes";

interface Job<W extends { changed: boolean }> {
  plan: WritePlan<W>;
  done: (err: unknown, result?: W) => void;
}

export interface GroupCommit {
  /** queues a write; `done` is called after its commit (or with the error that refused it) */
  enqueue<W extends { changed: boolean }>(plan: WritePlan<W>, done: (err: unknown, result?: W) => void): void;
  /** resolves when everything queued so far is committed or refused (used by close) */
  flush(): Promise<void>;
}

export function groupCommit(db: Db, opts: { maxBatch?: number; onError?: (err: unknown) => void } = {}): GroupCommit {
  const maxBatch = opts.maxBatch ?? 256;
  let queue: Job<{ changed: boolean }>[] = [];
  let running: Promise<void> | null = null;
  let scheduled = false;

  const safe = (fn: () => void) => {
    try {
      fn();
    } catch (err) {
      opts.onError?.(err);
    }
  };

  async function runBatch(batch: Job<{ changed: boolean }>[]): Promise<void> {
    let outcomes: { changed: boolean }[] | null;
    try {
      const counts: number[] = [];
      const results = (await db.batch("write", (q) => {
        const all: Statement[] = [];
        for (const j of batch) {
          const st = j.plan.statements(q);
          counts.push(st.length);
          all.push(...st);
        }
        return all as [Statement, ...Statement[]];
      })) as unknown[];
      let at = 0;
      outcomes = batch.map((j, i) => {
        const slice = results.slice(at, at + counts[i]);
        at += counts[i];
        return j.plan.read(slice);
      });
    } catch {
      // nothing of the batch is stored: each write goes the exact path, which answers for itself
      outcomes = null;
    }
    for (const [i, job] of batch.entries()) {
      const w = outcomes?.[i];
      if (w) {
        safe(() => job.done(null, w));
        continue;
      }
      try {
        const exact = await db.write((tx) => job.plan.exact(tx));
        safe(() => job.done(null, exact));
      } catch (err) {
        safe(() => job.done(err));
      }
    }
  }

  function start(): void {
    if (running || queue.length === 0) return;
    running = (async () => {
      while (queue.length) {
        const batch = queue.slice(0, maxBatch);
        queue = queue.slice(batch.length);
        await runBatch(batch);
      }
    })().finally(() => {
      running = null;
      start();
    });
  }

  return {
    enqueue(plan, done) {
      queue.push({ plan, done } as unknown as Job<{ changed: boolean }>);
      if (running || scheduled) return;
      // wait for the check phase, so the writes of one turn of the event loop share a batch
      scheduled = true;
      setImmediate(() => {
        scheduled = false;
        start();
      });
    },
    async flush() {
      start();
      while (running) await running;
    },
  };
}

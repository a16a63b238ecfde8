/**
 * Readiness: the server is ready when it can serve every request it will serve. Each part that
 * must be in place first (database migrated, mail dispatcher running, payment service reachable,
 * password checker loaded, demo data seeded, worker pools started) registers here before the
 * server listens and reports when it is done; `GET /api/health` answers 503 with what is still
 * pending until then, and again while the server is stopping. Liveness (`GET /api/health/live`)
 * only says the process answers.
 */
export interface ReadinessState {
  ready: boolean;
  /** names of the parts still starting, in the order they registered */
  pending: string[];
  /** parts that failed to start (the server stays not ready) */
  failed: { name: string; message: string }[];
  stopping: boolean;
}

export interface Readiness {
  /** Registers a part; call the returned function when it is in place (with an error if it failed). */
  pending(name: string): (err?: unknown) => void;
  /** Registers a part that is in place when `work` settles. Returns `work`. */
  track<T>(name: string, work: Promise<T>): Promise<T>;
  state(): ReadinessState;
  /** Resolves once nothing is pending; rejects as soon as a part fails. */
  whenReady(): Promise<void>;
  /** The server is closing: not ready any more. */
  stopping(): void;
}

export function createReadiness(): Readiness {
  const pending = new Map<number, string>();
  const failed: { name: string; message: string }[] = [];
  let seq = 0;
  let isStopping = false;
  const waiters: { resolve: () => void; reject: (e: Error) => void }[] = [];

  const settle = () => {
    if (failed.length) {
      const err = new Error(`Not ready: ${failed.map((f) => `${f.name}: ${f.message}`).join("; ")}`);
      for (const w of waiters.splice(0)) w.reject(err);
    } else if (pending.size === 0) {
      for (const w of waiters.splice(0)) w.resolve();
    }
  };

  const r: Readiness = {
    pending(name) {
      const id = ++seq;
      pending.set(id, name);
      let done = false;
      return (err?: unknown) => {
        if (done) return;
        done = true;
        pending.delete(id);
        if (err !== undefined) failed.push({ name, message: err instanceof Error ? err.message : String(err) });
        settle();
      };
    },
    track(name, work) {
      const done = r.pending(name);
      work.then(
        () => done(),
        (err) => done(err ?? new Error("failed")),
      );
      return work;
    },
    state() {
      const list = [...pending.values()];
      return {
        ready: list.length === 0 && failed.length === 0 && !isStopping,
        pending: list,
        failed: [...failed],
        stopping: isStopping,
      };
    },
    whenReady() {
      return new Promise<void>((resolve, reject) => {
        waiters.push({ resolve, reject });
        settle();
      });
    },
    stopping() {
      isStopping = true;
    },
  };
  return r;
}

/** The body and status of `GET /api/health` for a readiness state. */
export function healthAnswer(s: ReadinessState): { status: number; body: Record<string, unknown> } {
  if (s.ready) return { status: 200, body: { ok: true, ready: true } };
  const what = s.stopping
    ? "the server is stopping"
    : [...s.pending, ...s.failed.map((f) => `${f.name} (failed)`)].join(", ");
  return {
    status: 503,
    body: {
      ok: false,
      ready: false,
      pending: s.pending,
      failed: s.failed,
      stopping: s.stopping,
      error: { code: s.stopping ? "stopping" : "not_ready", message: `Not ready yet: ${what}.` },
    },
  };
}

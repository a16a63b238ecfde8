/**
 * The unit-of-work seam (docs/decisions/016-unit-of-work.md).
 *
 *   const row = await db.write(async (tx) => { … await tx.update(…).run(); return … });
 *   const view = await db.read(async (tx) => …);
 *
 * A body only awaits the database through `tx`. `Tx` is typed for both kinds of driver, so every
 * query result has to be awaited: the same body runs on better-sqlite3 (the embedded default, where
 * each query answers at once) and on an asynchronous driver (a libSQL server for several nodes).
 *
 * On better-sqlite3 the connection is shared by the whole process, so units are run one at a time
 * (a promise chain), each inside `BEGIN IMMEDIATE … COMMIT` (`BEGIN … COMMIT` for reads). Because the
 * body awaits only answers that are already there, a unit finishes within one pass of the microtask
 * queue; a unit still open when the event loop reaches its next check phase has awaited something
 * else (a payment call, a mail, a timer, a unit inside the unit — pass `tx` down instead) and is
 * rolled back there and then with an error, freeing the connection. A body that fails before it has
 * written anything commits instead of rolling back, so a synchronous write of other code that ran in
 * one of its microtask gaps (uploads, live marks) is never undone with it. (No AsyncLocalStorage: on
 * Node 20 it turns on promise hooks for every promise of the process, live layer included.)
 */
import type Database from "better-sqlite3";
import type { BaseSQLiteDatabase } from "drizzle-orm/sqlite-core";
import type { BetterSQLite3Database } from "drizzle-orm/better-sqlite3";
import type { Client, Transaction, TransactionMode } from "@libsql/client/http";
import type { LibSQLDatabase } from "drizzle-orm/libsql/driver-core";
import { LibSQLSession, LibSQLTransaction } from "drizzle-orm/libsql/session";
import type * as schema from "./schema/index";

/** A database handle inside a unit: sync or async driver alike, so every result must be awaited. */
export type Tx = BaseSQLiteDatabase<"sync" | "async", unknown, typeof schema>;

/** A unit's body: awaits only the database through `tx` (a lone query may be returned as it is). */
export type UnitBody<T> = (tx: Tx) => T | Promise<T>;

export interface UnitOfWork {
  /** Runs `body` in one write transaction. */
  write<T>(body: UnitBody<T>): Promise<Awaited<T>>;
  /** Runs `body` in one read transaction (a consistent snapshot); writing in it is an error. */
  read<T>(body: UnitBody<T>): Promise<Awaited<T>>;
}

export class UnitOfWorkError extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "UnitOfWorkError";
  }
}

/**
 * The libSQL server took a unit's write lock back: it was held longer than the server allows (5 s
 * for sqld), so the server rolled the unit back and nothing of it was stored. A unit that awaits
 * only the database stays far below that; this is a unit that awaited something else, or a server
 * so loaded that one transaction could not finish in time.
 */
export class TransactionTimeoutError extends UnitOfWorkError {
  readonly code = "TRANSACTION_TIMEOUT";
  constructor(cause: unknown) {
    super(
      "The database server ended this unit of work because it held the write lock too long (TRANSACTION_TIMEOUT); " +
        "nothing of it was stored.",
      { cause },
    );
    this.name = "TransactionTimeoutError";
  }
}

/** Is this a libSQL client error saying the server has ended the transaction (its lock was taken back)? */
export function isTransactionTimeout(err: unknown): boolean {
  // drizzle wraps the driver's error (DrizzleQueryError, the driver's one as `cause`)
  for (
    let e = err as { code?: unknown; message?: unknown; cause?: unknown } | null, depth = 0;
    e && depth < 5;
    depth++
  ) {
    if (e.code === "TRANSACTION_TIMEOUT" || /TRANSACTION_TIMEOUT/.test(String(e.message ?? ""))) return true;
    e = e.cause as typeof e;
  }
  return false;
}

const WRITES = new Set(["insert", "update", "delete", "run", "batch"]);

/**
 * The seam over one better-sqlite3 connection. `txDb` is a drizzle instance on the same connection
 * (a separate object, so the unit can tell its own writes from other code's).
 */
export function embeddedUnitOfWork(sqlite: Database.Database, txDb: BetterSQLite3Database<typeof schema>): UnitOfWork {
  let tail: Promise<unknown> = Promise.resolve();

  function unit<T>(mode: "write" | "read", body: UnitBody<T>): Promise<Awaited<T>> {
    const run = tail.then(() => runUnit(sqlite, txDb, mode, body));
    tail = run.catch(() => undefined);
    return run;
  }

  return {
    write: (body) => unit("write", body),
    read: (body) => unit("read", body),
  };
}

/**
 * One unit on the connection. It settles when its body does — or, if the body is still running when
 * the event loop reaches its check phase (it awaited something other than the database, or a unit
 * inside itself), it is rolled back there and then, fails with UnitOfWorkError and frees the
 * connection for the next unit; its tx refuses any further statement.
 */
function runUnit<T>(
  sqlite: Database.Database,
  txDb: BetterSQLite3Database<typeof schema>,
  mode: "write" | "read",
  body: UnitBody<T>,
): Promise<Awaited<T>> {
  return new Promise<Awaited<T>>((resolve, reject) => {
    sqlite.exec(mode === "write" ? "BEGIN IMMEDIATE" : "BEGIN");
    let settled = false;
    let wrote = false;
    let dead = false;
    const end = (how: "COMMIT" | "ROLLBACK", then: () => void) => {
      if (settled) return;
      settled = true;
      clearImmediate(guard);
      try {
        if (sqlite.inTransaction) sqlite.exec(how);
      } catch (err) {
        if (sqlite.inTransaction) sqlite.exec("ROLLBACK");
        reject(err);
        return;
      }
      then();
    };
    const guard = setImmediate(() => {
      dead = true;
      end("ROLLBACK", () =>
        reject(
          new UnitOfWorkError(
            "A unit of work awaited something other than the database (or opened a unit inside itself); it was rolled back.",
          ),
        ),
      );
    });
    const tx = new Proxy(txDb, {
      get(target, prop, receiver) {
        if (dead) throw new UnitOfWorkError("This unit of work was rolled back; its tx can no longer be used.");
        if (typeof prop === "string" && WRITES.has(prop)) {
          if (mode === "read") throw new UnitOfWorkError(`"${prop}" inside a read unit; use db.write.`);
          wrote = true;
        }
        return Reflect.get(target, prop, receiver);
      },
    }) as unknown as Tx;
    Promise.resolve()
      .then(() => body(tx))
      .then(
        (out) => end("COMMIT", () => resolve(out as Awaited<T>)),
        // nothing of the unit's own to undo: commit, so a synchronous write of other code that ran in
        // one of its microtask gaps is kept
        (err) => end(wrote ? "ROLLBACK" : "COMMIT", () => reject(err)),
      );
  });
}

/**
 * The seam over a libSQL server (drizzle-orm/libsql/http over @libsql/client/http). Each unit is one
 * server-side transaction on its own stream: `BEGIN IMMEDIATE` for writes (writers of every node
 * queue on the server's one write lock), a read-only transaction for reads (a snapshot that never
 * waits for writers). Nothing is serialized in the process. Each statement is one round trip to the
 * server while the unit is open, which is why a body awaits only the database and stays short: the
 * server takes a write lock back after 5 s (TRANSACTION_TIMEOUT). Then the statement or the commit
 * fails, the server has already rolled back, and the rollback that drizzle would send fails in turn
 * ("no transaction is active") and would hide the cause; here the rollback's own failure is dropped
 * and the unit fails with TransactionTimeoutError.
 */
export function libsqlUnitOfWork(client: Client, orm: LibSQLDatabase<typeof schema>, gate = new Gate(32)): UnitOfWork {
  // the session of drizzle's database carries the dialect, the schema and the options a transaction needs
  const base = (orm as unknown as { session: LibSQLSessionParts }).session;

  async function unit<T>(mode: TransactionMode, body: UnitBody<T>): Promise<Awaited<T>> {
    let ltx: Transaction;
    try {
      ltx = await client.transaction(mode);
    } catch (err) {
      throw explain(err);
    }
    const session = new LibSQLSession(client, base.dialect, base.schema, base.options, ltx);
    const raw = new LibSQLTransaction("async", base.dialect, session, base.schema);
    // a read transaction on the server does not refuse writes itself: the unit does, as on the file
    const tx = mode === "read" ? readOnly(raw) : raw;
    let out: Awaited<T>;
    try {
      out = await body(tx as unknown as Tx);
    } catch (err) {
      await ltx.rollback().catch(() => undefined); // already rolled back by the server on a timeout
      ltx.close();
      throw explain(err);
    }
    try {
      await ltx.commit();
    } catch (err) {
      ltx.close();
      throw explain(err);
    }
    return out;
  }

  return {
    write: (body) => gate.run(() => unit("write", body)),
    read: (body) => gate.run(() => unit("read", body)),
  };
}

/**
 * At most `limit` units and batches of one process open on the libSQL server at a time; the others
 * wait their turn, first come first served. The server refuses requests beyond its own limit with
 * HTTP 429 (sqld: 128 concurrent connections and requests by default), so several nodes each
 * flooding it with a burst (a pointer storm, 200 marks at once) must not reach it; a queue here
 * costs a few milliseconds, a refusal inside a transaction costs the unit. Units never open a unit
 * inside another (refused on the embedded driver, which the same code runs on), so a unit waiting
 * for a turn holds none.
 */
export class Gate {
  private active = 0;
  private readonly waiting: (() => void)[] = [];
  constructor(readonly limit: number) {
    if (!(limit >= 1)) throw new Error("a gate lets at least one through");
  }

  async run<T>(fn: () => Promise<T>): Promise<T> {
    if (this.active >= this.limit) await new Promise<void>((r) => this.waiting.push(r));
    else this.active++;
    try {
      return await fn();
    } finally {
      const next = this.waiting.shift();
      if (next)
        next(); // the turn passes on: `active` stays the same
      else this.active--;
    }
  }
}

type LibSQLSessionParts =
  ConstructorParameters<typeof LibSQLSession> extends [unknown, infer D, infer S, infer O, ...unknown[]]
    ? { dialect: D; schema: S; options: O }
    : never;

function readOnly<T extends object>(tx: T): T {
  return new Proxy(tx, {
    get(target, prop, receiver) {
      if (typeof prop === "string" && WRITES.has(prop))
        throw new UnitOfWorkError(`"${prop}" inside a read unit; use db.write.`);
      return Reflect.get(target, prop, receiver);
    },
  });
}

function explain(err: unknown): unknown {
  if (err instanceof UnitOfWorkError) return err;
  if (isTransactionTimeout(err)) return new TransactionTimeoutError(err);
  return err;
}

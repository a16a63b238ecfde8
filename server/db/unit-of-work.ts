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
import type * as schema from "./schema/index";

/** A database handle inside a unit: sync or async driver alike, so every result must be awaited. */
export type Tx = BaseSQLiteDatabase<"sync" | "async", unknown, typeof schema>;

export interface UnitOfWork {
  /** Runs `body` in one write transaction (serialized with every other unit of this process). */
  write<T>(body: (tx: Tx) => Promise<T>): Promise<T>;
  /** Runs `body` in one read transaction (a consistent snapshot); writing in it is an error. */
  read<T>(body: (tx: Tx) => Promise<T>): Promise<T>;
}

export class UnitOfWorkError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "UnitOfWorkError";
  }
}

const WRITES = new Set(["insert", "update", "delete", "run", "batch"]);

/**
 * The seam over one better-sqlite3 connection. `txDb` is a drizzle instance on the same connection
 * (a separate object, so the unit can tell its own writes from other code's).
 */
export function embeddedUnitOfWork(sqlite: Database.Database, txDb: BetterSQLite3Database<typeof schema>): UnitOfWork {
  let tail: Promise<unknown> = Promise.resolve();

  function unit<T>(mode: "write" | "read", body: (tx: Tx) => Promise<T>): Promise<T> {
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
  body: (tx: Tx) => Promise<T>,
): Promise<T> {
  return new Promise<T>((resolve, reject) => {
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
        (out) => end("COMMIT", () => resolve(out)),
        // nothing of the unit's own to undo: commit, so a synchronous write of other code that ran in
        // one of its microtask gaps is kept
        (err) => end(wrote ? "ROLLBACK" : "COMMIT", () => reject(err)),
      );
  });
}

/**
 * The same seam over an asynchronous drizzle database (e.g. drizzle-orm/libsql on a libSQL server
 * or file): each unit is one driver transaction (`BEGIN IMMEDIATE` for writes). Nothing in the
 * process has to be serialized: the driver holds a connection per transaction.
 */
export function asyncUnitOfWork(db: {
  transaction<T>(
    fn: (tx: never) => Promise<T>,
    config?: { behavior?: "deferred" | "immediate" | "exclusive" },
  ): Promise<T>;
}): UnitOfWork {
  return {
    write: (body) => db.transaction((tx) => body(tx as unknown as Tx), { behavior: "immediate" }),
    read: (body) => db.transaction((tx) => body(tx as unknown as Tx), { behavior: "deferred" }),
  };
}

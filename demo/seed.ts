/**
 * The demo seed: three invented shops, six experts (four approved, two pending), a desk admin,
 * eleven cases that between them are in every state of the desk, captures made by the project's
 * signal generators and stored and analysed by the trace service, marks and chat on the open
 * cases, and a casebook of resolved cases.
 *
 * Everything goes through the app's own services (cases, traces, payments through the Stripe SDK
 * against the local fake, queue, answers, live annotations and messages), so the data is what the
 * app would have made. Times are fixed offsets from the moment of seeding (ctx.now is moved while
 * seeding and put back afterwards); generators use fixed seeds.
 */
import crypto from "node:crypto";
import fs from "node:fs";
import path from "node:path";
import { count, eq } from "drizzle-orm";
import type { AppContext } from "../server/context";
import { schema } from "../server/db/client";
import type { Actor } from "../server/auth/session";
import { createShop } from "./builders/shops";
import { createAdmin, createUser, type CreatedUser } from "./builders/users";
import { createExpert } from "./builders/experts";
import { createCase } from "../server/services/cases";
import { addTrace, type TraceRow } from "../server/services/traces";
import { storageLayout } from "../server/services/storage";
import { getCaseRow } from "../server/workflow/records";
import { submitCase } from "../server/workflow/commands/submit";
import { refreshPayment } from "../server/workflow/commands/payment-events";
import { withdrawCase } from "../server/workflow/commands/withdraw";
import { refundCase } from "../server/workflow/commands/refund";
import { claimCase } from "../server/workflow/commands/claim";
import { requestData } from "../server/workflow/commands/data";
import { answerCase, confirmCase } from "../server/workflow/commands/answer";
import { createAnnotation, withColor } from "../server/services/annotations";
import { postMessage } from "../server/services/messages";
import { caseDraftSchema } from "../shared/schemas/case";
import { captureSettingsSchema } from "../shared/schemas/capture-settings";
import { annotationCreateSchema, dataRequestSchema } from "../shared/schemas/realtime";
import { answerSchema } from "../shared/schemas/queue";
import type { CaseStatus } from "../shared/domain/case-status";
import { DEMO_PASSWORD, DEMO_SIGN_INS } from "./sign-ins";
import { DEMO_ADMIN, DEMO_EXPERTS, DEMO_SHOPS } from "./people";
import { DEMO_CASES, type DemoCase } from "./cases";
import type { DemoTrace } from "./traces";
import { seedCasebook } from "./casebook";

export { DEMO_PASSWORD, DEMO_SIGN_INS };

/** Invented shop and people for the demo; no real businesses or persons. */
export const DEMO_SHOP_NAME = DEMO_SHOPS[0].name;

/** Stripe's published test card that succeeds (docs.stripe.com/testing#cards). */
const TEST_CARD = "4242424242424242";
const MINUTE = 60_000;

export interface DemoSeedResult {
  /** case id per scenario key (demo/cases.ts) */
  cases: Record<string, string>;
  /** trace ids per scenario key, in the case's order */
  traces: Record<string, string[]>;
  users: Record<string, CreatedUser>;
  casebookEntries: number;
  /** cases left out because no local Stripe fake was there to pay them */
  skipped: string[];
  /** wall-clock milliseconds per part */
  timings: Record<string, number>;
}

function actorOf(u: CreatedUser): Actor & { shopId: string } {
  return { id: u.id, email: u.email, name: u.name, role: u.role, shopId: u.shopId as string };
}

/** ctx.now at fixed offsets from the moment of seeding. */
function seedClock(ctx: AppContext) {
  const real = ctx.now;
  const base = Math.floor(real().getTime() / 1000) * 1000;
  let t = base;
  ctx.now = () => new Date(t);
  return {
    base,
    /** minutes from the moment of seeding */
    at(minutes: number) {
      t = base + Math.round(minutes * MINUTE);
    },
    minutes: () => (t - base) / MINUTE,
    restore() {
      ctx.now = real;
    },
  };
}

/** Writes the CSV where uploads land and hands it to the trace service like the upload route does. */
async function uploadTrace(ctx: AppContext, actor: Actor, caseId: string, t: DemoTrace): Promise<TraceRow> {
  const layout = storageLayout(ctx.env.dataDir);
  await fs.promises.mkdir(layout.tempDir, { recursive: true });
  const file = path.join(layout.tempDir, `${crypto.randomBytes(16).toString("hex")}.part`);
  const bytes = Buffer.from(t.csv, "utf8");
  await fs.promises.writeFile(file, bytes);
  try {
    const sha256 = crypto.createHash("sha256").update(bytes).digest("hex");
    const settings = captureSettingsSchema.parse(t.settings);
    return await addTrace(
      ctx,
      actor,
      caseId,
      { path: file, size: bytes.length, sha256, originalname: t.file, detected: "text" },
      { settings, name: t.name },
    );
  } finally {
    await fs.promises.rm(file, { force: true });
  }
}

/** The local fake answers /_test/*; real Stripe does not (and is never paid by the demo). */
function fakeStripeBase(ctx: AppContext): string | null {
  const base = ctx.env.STRIPE_API_BASE;
  return base && /^http:\/\/(127\.0\.0\.1|localhost)(:\d+)?\/?$/.test(base) ? base.replace(/\/$/, "") : null;
}

/** Pays a checkout on the local fake with the test card, then applies the result at once. */
async function payCheckout(ctx: AppContext, checkoutUrl: string, paymentId: string): Promise<void> {
  const base = fakeStripeBase(ctx)!;
  const m = /\/checkout\/(cs_[A-Za-z0-9_]+)/.exec(checkoutUrl);
  if (!m) throw new Error(`demo seed: not a checkout URL of the local fake: ${checkoutUrl}`);
  const res = await fetch(`${base}/_test/checkout/${m[1]}/pay`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ card: TEST_CARD }),
  });
  if (!res.ok)
    throw new Error(`demo seed: the fake checkout refused the test card (${res.status}): ${await res.text()}`);
  // The webhook does the same a moment later; reading the payment now does not wait for it (idempotent).
  await refreshPayment(ctx, paymentId);
}

/** Evenly spaced minutes in [from, to]. */
function spread(n: number, from: number, to: number): number[] {
  if (n <= 0) return [];
  if (n === 1) return [from];
  return Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1));
}

async function runStory(
  ctx: AppContext,
  clock: ReturnType<typeof seedClock>,
  c: DemoCase,
  people: Record<string, CreatedUser>,
  out: DemoSeedResult,
  log: (line: string) => void,
): Promise<void> {
  const tech = actorOf(people[c.by]);
  const expert = c.expert ? actorOf(people[c.expert]) : null;
  const admin = actorOf(people.admin);
  const at = (after: number) => clock.at(c.openedAt + after);

  at(0);
  const row = await createCase(ctx, tech, caseDraftSchema.parse(c.draft));
  const caseId = row.id;
  out.cases[c.key] = caseId;

  const traces = c.traces();
  const traceRows: TraceRow[] = [];
  for (const [i, t] of traces.entries()) {
    at(3 + i);
    traceRows.push(await uploadTrace(ctx, tech, caseId, t));
    log(`  trace ${t.name}`);
  }
  out.traces[c.key] = traceRows.map((t) => t.id);
  if (c.final === "draft") return;

  const paidAt = c.paidAfter ?? 10;
  at(paidAt - 2);
  const checkout = await submitCase(ctx, tech, caseId, c.tier ?? "standard");
  if (c.final === "awaiting_payment") return;
  at(paidAt);
  log(`  checkout ${checkout.paymentId}`);
  await payCheckout(ctx, checkout.checkoutUrl, checkout.paymentId);
  log(`  paid`);

  if (c.withdrawnAfter != null) {
    at(c.withdrawnAfter);
    await withdrawCase(ctx, tech, caseId);
    return;
  }
  if (c.refundedAfter != null) {
    // The desk's refund of a held payment: the case becomes refunded and the hold is released.
    at(c.refundedAfter);
    await refundCase(ctx, admin, caseId, c.refundReason);
    return;
  }
  if (!expert || c.claimedAfter == null) return;

  at(c.claimedAfter);
  await claimCase(ctx, expert, caseId);

  // Marks and chat between the claim and the answer (or until a couple of minutes ago).
  const end = c.answeredAfter != null ? c.answeredAfter - 5 : Math.max(c.claimedAfter + 5, -c.openedAt - 2);
  const live: ({ kind: "mark"; i: number } | { kind: "message"; i: number })[] = [];
  const marks = c.annotations ?? [];
  const msgs = c.messages ?? [];
  // interleave: message, mark, message, mark…
  for (let i = 0; i < Math.max(marks.length, msgs.length); i++) {
    if (i < msgs.length) live.push({ kind: "message", i });
    if (i < marks.length) live.push({ kind: "mark", i });
  }
  const times = spread(live.length, c.claimedAfter + 3, end);
  for (const [k, item] of live.entries()) {
    at(times[k]);
    if (item.kind === "mark") {
      const m = marks[item.i];
      const who = m.by === "expert" ? expert : tech;
      const tr = traces[m.trace];
      const pos = m.at(tr.truth);
      const input = annotationCreateSchema.parse({
        traceId: traceRows[m.trace].id,
        kind: m.kind,
        ...pos,
        ...(m.label ? { label: m.label } : {}),
      });
      await createAnnotation(ctx, await ctx.db.read((tx) => withColor(tx, who)), caseId, input);
    } else {
      const msg = msgs[item.i];
      const who = msg.by === "expert" ? expert : tech;
      await postMessage(ctx, await ctx.db.read((tx) => withColor(tx, who)), caseId, {
        text: msg.text,
        ...(msg.request ? { request: dataRequestSchema.parse(msg.request) } : {}),
      });
      if (msg.request && c.requestData) await requestData(ctx, expert, caseId, c.requestData.message);
    }
  }
  if (c.requestData && !msgs.some((m) => m.request)) {
    at(end + 1);
    await requestData(ctx, expert, caseId, c.requestData.message);
  }

  const answers = c.answers ?? [];
  const confirmations = c.confirmations ?? [];
  let t = c.answeredAfter ?? 0;
  for (const [i, a] of answers.entries()) {
    at(t);
    await answerCase(ctx, expert, caseId, answerSchema.parse(a));
    const conf = confirmations[i];
    if (!conf) break;
    t += 26 * 60; // the shop tries the fix the next day
    at(t);
    await confirmCase(ctx, tech, caseId, conf);
    t += 3 * 60;
  }
}

/** Seeds the whole demo into an empty database. Throws when a story does not end where it should. */
export async function seedDemo(ctx: AppContext, opts: { log?: (line: string) => void } = {}): Promise<DemoSeedResult> {
  const log = opts.log ?? (() => {});
  const started = performance.now();
  const out: DemoSeedResult = { cases: {}, traces: {}, users: {}, casebookEntries: 0, skipped: [], timings: {} };
  const clock = seedClock(ctx);
  try {
    // People: shops with their owners and technicians, experts, the admin. Joined long ago.
    clock.at(-120 * 24 * 60);
    for (const s of DEMO_SHOPS) {
      const shop = await createShop(ctx, { name: s.name });
      out.users[s.owner.key] = await createUser(ctx, {
        role: "owner",
        shopId: shop.id,
        email: s.owner.email,
        name: s.owner.name,
        password: DEMO_PASSWORD,
        color: s.owner.color,
      });
      for (const t of s.technicians) {
        out.users[t.key] = await createUser(ctx, {
          role: "technician",
          shopId: shop.id,
          email: t.email,
          name: t.name,
          password: DEMO_PASSWORD,
          color: t.color,
        });
      }
    }
    for (const e of DEMO_EXPERTS) {
      clock.at(e.status === "pending" ? -3 * 24 * 60 : -100 * 24 * 60);
      out.users[e.key] = await createExpert(ctx, {
        email: e.email,
        name: e.name,
        password: DEMO_PASSWORD,
        color: e.color,
        systems: e.systems,
        makes: e.makes,
        bio: e.bio,
        yearsExperience: e.yearsExperience,
        status: e.status,
        available: e.status === "approved",
        maxOpenCases: e.maxOpenCases,
      });
    }
    clock.at(-150 * 24 * 60);
    out.users.admin = await createAdmin(ctx, {
      email: DEMO_ADMIN.email,
      name: DEMO_ADMIN.name,
      password: DEMO_PASSWORD,
      color: DEMO_ADMIN.color,
    });
    out.timings.people = Math.round(performance.now() - started);

    // Cases, oldest first, so every open case's deadline lies ahead of the clock.
    const t0 = performance.now();
    const canPay = fakeStripeBase(ctx) !== null;
    for (const c of [...DEMO_CASES].sort((a, b) => a.openedAt - b.openedAt)) {
      const needsPayment = c.final !== "draft" && c.final !== "awaiting_payment";
      if (needsPayment && !canPay) {
        out.skipped.push(c.key);
        continue;
      }
      const ts = performance.now();
      await runStory(ctx, clock, c, out.users, out, log);
      const row = await ctx.db.read((tx) => getCaseRow(tx, out.cases[c.key]));
      const status = row?.status as CaseStatus | undefined;
      if (status !== c.final)
        throw new Error(`demo seed: case "${c.key}" ended ${status ?? "missing"}, expected ${c.final}`);
      out.timings[`case:${c.key}`] = Math.round(performance.now() - ts);
      log(`case ${c.key}: ${c.final} (${out.timings[`case:${c.key}`]} ms)`);
    }
    out.timings.cases = Math.round(performance.now() - t0);

    const t1 = performance.now();
    clock.at(-1);
    out.casebookEntries = await seedCasebook(ctx, out.users);
    out.timings.casebook = Math.round(performance.now() - t1);
  } finally {
    clock.restore();
  }
  if (out.skipped.length)
    ctx.logger.warn({ skipped: out.skipped }, "demo seed: no local Stripe fake, paid cases left out");
  out.timings.total = Math.round(performance.now() - started);
  return out;
}

/**
 * Seeds the demo when the database has no users yet. Returns true when it seeded, false when
 * data was already there.
 */
export async function seedDemoIfEmpty(ctx: AppContext): Promise<boolean> {
  const n = (await ctx.db.read((tx) => tx.select({ n: count() }).from(schema.user).get()))?.n ?? 0;
  if (n > 0) return false;
  const r = await seedDemo(ctx);
  ctx.logger.info(
    { timings: r.timings, cases: Object.keys(r.cases).length, casebook: r.casebookEntries },
    "demo seeded",
  );
  return true;
}

/** For tests: the user row of a demo e-mail. */
export async function demoUserId(ctx: AppContext, email: string): Promise<string | undefined> {
  const row = await ctx.db.read((tx) =>
    tx.select({ id: schema.user.id }).from(schema.user).where(eq(schema.user.email, email)).get(),
  );
  return row?.id;
}

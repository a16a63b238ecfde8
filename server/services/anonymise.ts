/**
 * A resolved case → the anonymised casebook entry it becomes.
 *
 * Nothing of the shop or of people leaves: no shop name, no user ids or names, no e-mail
 * addresses or phone numbers, no private notes, no chat, no photos (they may show a plate, a
 * face or a workshop), no file names of uploads. The VIN is cut to its model part (positions 1–8,
 * 10, 11, check digit and serial masked); the free text (complaint, tests done, parts replaced,
 * the expert's answer, the shop's confirmation note, annotation labels, trace names) is scrubbed
 * with shared/domain/anonymise.ts, told the names and addresses of everybody on the case: the
 * shop's members and invitees, the expert, the authors of annotations, the shop's name.
 */
import { and, asc, eq, isNull } from "drizzle-orm";
import { schema, type Tx } from "../db/client";
import { maskVin, scrubDeep, scrubText, type ScrubContext } from "../../shared/domain/anonymise";
import { parseDtc } from "../../shared/domain/dtc";
import { symptomLabels, type Symptom } from "../../shared/schemas/case";
import type {
  CasebookAnnotation,
  CasebookEntryBody,
  CasebookTrace,
  CasebookVehicle,
} from "../../shared/schemas/casebook";
import { caseComparison, type TraceRow } from "./traces";
import { casePattern, type CasePattern } from "./similar";

type CaseRow = typeof schema.caseTable.$inferSelect;

/** What the bulk insert takes: an entry already anonymised (publishing, the demo seed, the bench). */
export interface CasebookEntryInput {
  id?: string;
  caseId?: string | null;
  expertId?: string | null;
  title?: string;
  vehicle: Partial<CasebookVehicle>;
  complaint: string;
  symptoms?: string[];
  conditions?: Record<string, unknown>;
  codes?: string[];
  system?: string | null;
  testsDone?: string;
  partsReplaced?: string;
  diagnosis: string;
  rootCause: string;
  fix: string;
  testsToConfirm?: string;
  outcomeNote?: string;
  rating?: number | null;
  confirmed?: boolean;
  round?: number;
  traces?: CasebookTrace[];
  annotations?: CasebookAnnotation[];
  comparison?: unknown;
  /** the waveform pattern for similar cases (null: none) */
  pattern?: CasePattern | null;
  publishedAt?: Date;
}

/** The names, addresses and VIN the scrubber must remove for this case. */
export async function scrubContextForCase(tx: Tx, c: CaseRow): Promise<ScrubContext> {
  const names: (string | null)[] = [];
  const emails: (string | null)[] = [];
  const addUser = (u: { name: string | null; email: string | null } | undefined) => {
    if (!u) return;
    names.push(u.name);
    emails.push(u.email);
  };
  const { user, invite, annotation, caseAnswer, caseConfirmation, shop } = schema;
  for (const u of await tx
    .select({ name: user.name, email: user.email })
    .from(user)
    .where(eq(user.shopId, c.shopId))
    .all())
    addUser(u);
  for (const i of await tx
    .select({ name: invite.name, email: invite.email })
    .from(invite)
    .where(eq(invite.shopId, c.shopId))
    .all())
    addUser(i);
  const userIds = new Set<string>();
  if (c.expertId) userIds.add(c.expertId);
  if (c.createdBy) userIds.add(c.createdBy);
  const authors = [
    ...(await tx.select({ id: annotation.authorId }).from(annotation).where(eq(annotation.caseId, c.id)).all()),
    ...(await tx.select({ id: caseAnswer.expertId }).from(caseAnswer).where(eq(caseAnswer.caseId, c.id)).all()),
    ...(await tx
      .select({ id: caseConfirmation.userId })
      .from(caseConfirmation)
      .where(eq(caseConfirmation.caseId, c.id))
      .all()),
  ];
  for (const a of authors) if (a.id) userIds.add(a.id);
  for (const id of userIds)
    addUser(await tx.select({ name: user.name, email: user.email }).from(user).where(eq(user.id, id)).get());
  const shopRow = await tx.select({ name: shop.name }).from(shop).where(eq(shop.id, c.shopId)).get();
  return { names, emails, organisations: [shopRow?.name ?? null], vin: c.vin };
}

/** Settings fields that describe the capture, not the people (free-text ones are scrubbed). */
const SAFE_SETTINGS = [
  "kind",
  "probe",
  "kvPerVolt",
  "mvPerAmp",
  "voltsPerDiv",
  "timePerDivS",
  "triggerSource",
  "triggerLevel",
  "triggerMode",
  "triggerSlope",
  "groundOffsetDiv",
  "coupling",
  "sampleRateHz",
  "cylinder",
  "coil",
  "circuit",
  "sensor",
  "wasteSpark",
  "cylinders",
] as const;

function traceName(t: TraceRow, i: number): string {
  const s = (t.settings ?? {}) as Record<string, unknown>;
  const kind = String(t.kind).replace(/-/g, " ");
  if (typeof s.coil === "number") return `Coil ${s.coil} · ${kind}`;
  if (typeof s.cylinder === "number") return `Cylinder ${s.cylinder} · ${kind}`;
  return `Trace ${i + 1} · ${kind}`;
}

/** A trace as published: no file names, no uploader; the analysis with its text scrubbed. */
export function publishTrace(entryId: string, t: TraceRow, i: number, scrub: ScrubContext): CasebookTrace {
  const s = (t.settings ?? {}) as Record<string, unknown>;
  const settings: Record<string, unknown> = {};
  for (const k of SAFE_SETTINGS)
    if (s[k] !== undefined) settings[k] = typeof s[k] === "string" ? scrubText(s[k] as string, scrub) : s[k];
  const analysis = t.analysis ? scrubAnalysis(t.analysis, scrub) : null;
  return {
    id: t.id,
    name: traceName(t, i),
    kind: t.kind,
    samples: t.samples,
    sampleRateHz: t.sampleRateHz,
    t0: t.t0,
    durationS: t.durationS,
    channels: (t.channels ?? []).map((c, k) => ({
      name: scrubText(c.name, scrub) || `Channel ${k + 1}`,
      unit: c.unit,
      min: c.min,
      max: c.max,
    })),
    settings,
    analysis,
    windowUrl: `/api/casebook/${encodeURIComponent(entryId)}/traces/${encodeURIComponent(t.id)}/window`,
  };
}

/** The analysis keeps its numbers; its strings (channel name, findings' wording) are scrubbed. */
function scrubAnalysis(a: Record<string, unknown>, scrub: ScrubContext): Record<string, unknown> {
  const out: Record<string, unknown> = { ...a };
  if (typeof out.channel === "string") out.channel = scrubText(out.channel, scrub);
  if (Array.isArray(out.findings)) out.findings = scrubDeep(out.findings, scrub);
  return out;
}

function roundMileage(m: number | null): number | null {
  return m == null ? null : Math.round(m / 1000) * 1000;
}

/**
 * The anonymised entry of a resolved case, or null when it is not resolved or has no answer.
 * Reads only (inside the caller's unit); the caller writes it (server/services/casebook.ts).
 */
export async function anonymiseCase(tx: Tx, caseId: string, entryId: string): Promise<CasebookEntryInput | null> {
  const c = await tx.select().from(schema.caseTable).where(eq(schema.caseTable.id, caseId)).get();
  if (!c || c.status !== "resolved") return null;
  const answers = await tx
    .select()
    .from(schema.caseAnswer)
    .where(eq(schema.caseAnswer.caseId, caseId))
    .orderBy(asc(schema.caseAnswer.round), asc(schema.caseAnswer.createdAt))
    .all();
  const answer = answers.at(-1);
  if (!answer) return null;
  const confirmations = await tx
    .select()
    .from(schema.caseConfirmation)
    .where(and(eq(schema.caseConfirmation.caseId, caseId), eq(schema.caseConfirmation.fixed, true)))
    .orderBy(asc(schema.caseConfirmation.createdAt))
    .all();
  const confirmation = confirmations.at(-1);
  const scrub = await scrubContextForCase(tx, c);
  const traces: TraceRow[] = await tx
    .select()
    .from(schema.trace)
    .where(eq(schema.trace.caseId, caseId))
    .orderBy(asc(schema.trace.createdAt), asc(schema.trace.id))
    .all();
  const published = traces.map((t, i) => publishTrace(entryId, t, i, scrub));
  const traceIds = new Set(traces.map((t) => t.id));
  const marks = await tx
    .select()
    .from(schema.annotation)
    .where(and(eq(schema.annotation.caseId, caseId), isNull(schema.annotation.deletedAt)))
    .orderBy(asc(schema.annotation.seq))
    .all();
  const annotations: CasebookAnnotation[] = marks
    .filter((a) => traceIds.has(a.traceId))
    .map((a, i) => ({
      id: `${entryId}-a${i + 1}`,
      traceId: a.traceId,
      kind: a.kind as CasebookAnnotation["kind"],
      t0: a.t0,
      t1: a.t1,
      level: a.level,
      label: a.label ? scrubText(a.label, scrub) : null,
      channel: a.channel ? scrubText(a.channel, scrub) : null,
      color: a.color,
    }));
  const comparison = caseComparison(traces);
  const codes = (c.codes ?? []).map((x) => String(x).toUpperCase());
  const conditions: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(c.conditions ?? {}))
    if (["temperature", "load", "occurrence"].includes(k)) conditions[k] = v;
  return {
    id: entryId,
    caseId: c.id,
    expertId: answer.expertId ?? c.expertId,
    vehicle: {
      year: c.year,
      make: c.make ? scrubText(c.make, { ...scrub, givenNames: false }) : null,
      model: c.model ? scrubText(c.model, { ...scrub, givenNames: false }) : null,
      engine: c.engine ? scrubText(c.engine, { ...scrub, givenNames: false }) : null,
      fuel: c.fuel,
      transmission: c.transmission,
      mileage: roundMileage(c.mileage),
      mileageUnit: c.mileageUnit,
      vinModel: maskVin(c.vin),
    },
    complaint: scrubText(c.complaint, scrub),
    symptoms: (c.symptoms ?? []).map((s) => symptomLabels[s as Symptom] ?? scrubText(String(s), scrub)),
    conditions,
    codes,
    system: c.system,
    testsDone: scrubText(c.testsDone, scrub),
    partsReplaced: scrubText(c.partsReplaced, scrub),
    diagnosis: scrubText(answer.diagnosis, scrub),
    rootCause: scrubText(answer.rootCause, scrub),
    fix: scrubText(answer.recommendedFix, scrub),
    testsToConfirm: scrubText(answer.testsToConfirm, scrub),
    outcomeNote: scrubText(confirmation?.note, scrub),
    rating: confirmation?.rating ?? null,
    confirmed: !!confirmation,
    round: answer.round,
    traces: published,
    annotations,
    comparison: comparison ? { ...comparison } : null,
    pattern: casePattern(traces.map((t) => ({ settings: t.settings, analysis: t.analysis }))),
  };
}

/** The codes with their descriptions, for the entry and for the indexed text. */
export function describeCodes(codes: readonly string[]): { code: string; description: string }[] {
  return codes.map((code) => {
    const p = parseDtc(code);
    return { code: p.ok ? p.code : code, description: p.ok && p.description ? p.description : "" };
  });
}

export type { CasebookEntryBody };

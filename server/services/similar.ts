/**
 * Similar cases by waveform pattern.
 *
 * A case's traces (their analyses, stored at upload) become a pattern — the facts a technician
 * compares by eye: burn time, the odd cylinder's burn time, firing line and spark-line level
 * against the others, coil ringing (oscillations), rpm, the findings, relative compression — and
 * a fixed-length feature vector of those facts. Casebook entries keep theirs in casebook_vector;
 * an in-memory index (one Float32Array, loaded once per database and kept in step by `rev`)
 * answers "which entries are nearest" with a weighted distance, and each match comes with its
 * reasons in words ("coil 4 burn 0.6 ms against 1.5 ms on the others, like this case").
 */
import { asc, eq, gt, sql } from "drizzle-orm";
import { schema, type Db, type Tx } from "../db/client";
import { median } from "../../shared/analysis/stats";

export const FEATURE_VERSION = 1;

/** Findings that describe the vehicle rather than the capture (capture-quality remarks are left out). */
export const PATTERN_FINDINGS = [
  "no-events",
  "erratic-firing",
  "low-compression",
  "slow-cranking",
  "no-pintle-hump",
  "no-gap",
  "tooth-count",
  "damaged-tooth",
] as const;
const KINDS = ["secondary-ignition", "relative-compression", "injector", "crank"] as const;

const FINDING_WORDS: Record<string, string> = {
  "no-events": "no events found",
  "erratic-firing": "erratic firing",
  "low-compression": "low relative compression",
  "slow-cranking": "slow cranking",
  "no-pintle-hump": "no pintle hump",
  "no-gap": "no missing-tooth gap",
  "tooth-count": "wrong tooth count",
  "damaged-tooth": "damaged tooth",
};

/** Layout of the vector. NaN marks an unknown feature. */
export const DIM = {
  burnMs: 0,
  burnOdd: 1,
  peakOdd: 2,
  levelOdd: 3,
  oscMedian: 4,
  oscOdd: 5,
  rpm: 6,
  compressionLow: 7,
  pulseOdd: 8,
  findings: 9,
  kinds: 9 + PATTERN_FINDINGS.length,
} as const;
export const FEATURE_DIMS = DIM.kinds + KINDS.length;

/** Weights of the squared differences, per dimension. */
const WEIGHTS = (() => {
  const w = new Float32Array(FEATURE_DIMS);
  w[DIM.burnMs] = 1.0; // per ms
  w[DIM.burnOdd] = 6.0; // per unit of ln(ratio): a 0.4× burn is ln 0.4 = −0.92
  w[DIM.peakOdd] = 3.0;
  w[DIM.levelOdd] = 3.0;
  w[DIM.oscMedian] = 0.5; // per 2 ringing peaks
  w[DIM.oscOdd] = 1.5;
  w[DIM.rpm] = 0.5; // per 1000 rpm
  w[DIM.compressionLow] = 4.0;
  w[DIM.pulseOdd] = 2.0;
  for (let i = 0; i < PATTERN_FINDINGS.length; i++) w[DIM.findings + i] = 0.6;
  for (let i = 0; i < KINDS.length; i++) w[DIM.kinds + i] = 0.4;
  return w;
})();
/** what a feature known on one side only costs (as a squared difference before its weight) */
const ONE_SIDED = 0.3;

export type OddMetric = "burnTimeMs" | "peak" | "burnLevel" | "oscillations" | "pulseWidthMs";

export interface OddFact {
  metric: OddMetric;
  /** "coil 4", "cylinder 2", "trace 3", "firing 5 of 8" */
  label: string;
  value: number;
  /** median of the others */
  others: number;
  unit: string;
  /** value / others (oscillations: value − others) */
  ratio: number;
}

export interface CasePattern {
  version: number;
  kinds: string[];
  /** secondary traces (or firings, for a single trace) compared */
  compared: number;
  rpm: number | null;
  burnTimeMs: number | null;
  oscillations: number | null;
  /** the most different coil per metric, when there were at least two to compare */
  odd: OddFact[];
  findings: string[];
  /** the weakest cylinder of a relative-compression capture, % of the highest */
  lowCompression: { position: number; relativePct: number } | null;
}

/** What the pattern needs of a trace: its settings and the stored analysis. */
export interface PatternTrace {
  name?: string | null;
  settings?: Record<string, unknown> | null;
  analysis?: Record<string, unknown> | null;
}

type Summary = Record<string, unknown>;

function num(x: unknown): number | null {
  if (typeof x === "number" && Number.isFinite(x)) return x;
  if (x && typeof x === "object" && "median" in x) return num((x as { median: unknown }).median);
  return null;
}

function traceLabel(t: PatternTrace, i: number): string {
  const s = t.settings ?? {};
  if (typeof s.coil === "number") return `coil ${s.coil}`;
  if (typeof s.cylinder === "number") return `cylinder ${s.cylinder}`;
  return `trace ${i + 1}`;
}

const METRIC_UNIT: Record<OddMetric, string> = {
  burnTimeMs: "ms",
  peak: "*",
  burnLevel: "*",
  oscillations: "",
  pulseWidthMs: "ms",
};

/** The member of `items` farthest from the median of the others (log ratio; difference for counts). */
function oddOne(items: { label: string; value: number }[], metric: OddMetric, unit: string): OddFact | null {
  if (items.length < 2) return null;
  let best: OddFact | null = null;
  let bestDev = -1;
  for (let i = 0; i < items.length; i++) {
    const others = median(items.filter((_, j) => j !== i).map((x) => x.value));
    if (others == null) continue;
    const v = items[i].value;
    let dev: number;
    let ratio: number;
    if (metric === "oscillations") {
      ratio = v - others;
      dev = Math.abs(ratio) / 2;
    } else {
      if (!(others > 0) || !(v > 0)) continue;
      ratio = v / others;
      dev = Math.abs(Math.log(ratio));
    }
    if (dev > bestDev) {
      bestDev = dev;
      best = { metric, label: items[i].label, value: v, others, unit, ratio };
    }
  }
  return best;
}

/** The pattern of a case from its traces' stored analyses. */
export function casePattern(traces: readonly PatternTrace[]): CasePattern {
  const analysed = traces.filter((t) => t.analysis && typeof t.analysis.kind === "string");
  const kinds = [...new Set(analysed.map((t) => String(t.analysis!.kind)))]
    .filter((k) => (KINDS as readonly string[]).includes(k))
    .sort();
  const findings = new Set<string>();
  for (const t of analysed) {
    for (const f of (t.analysis!.findings as { code?: string; severity?: string }[] | undefined) ?? []) {
      if (f?.code && (PATTERN_FINDINGS as readonly string[]).includes(f.code) && f.severity !== "info")
        findings.add(f.code);
    }
  }
  const sec = analysed.map((t, i) => ({ t, i })).filter(({ t }) => t.analysis!.kind === "secondary-ignition");
  const rpms = analysed
    .map((t) => num((t.analysis!.summary as Summary | undefined)?.rpm))
    .filter((x): x is number => x != null && x > 0);
  const odd: OddFact[] = [];
  let burn: number | null = null;
  let osc: number | null = null;
  let compared = 0;
  if (sec.length >= 2) {
    // one trace per coil or cylinder: compare the traces' medians
    compared = sec.length;
    const unit = String(sec[0].t.analysis!.unit ?? "V");
    const per = (metric: OddMetric) =>
      sec
        .map(({ t, i }) => ({ label: traceLabel(t, i), value: num((t.analysis!.summary as Summary)?.[metric]) }))
        .filter((x): x is { label: string; value: number } => x.value != null);
    for (const m of ["burnTimeMs", "peak", "burnLevel", "oscillations"] as OddMetric[]) {
      const f = oddOne(per(m), m, METRIC_UNIT[m] === "*" ? unit : METRIC_UNIT[m]);
      if (f) odd.push(f);
    }
    burn = median(per("burnTimeMs").map((x) => x.value));
    osc = median(per("oscillations").map((x) => x.value));
  } else if (sec.length === 1) {
    // one trace with several firings (one pickup on a shared lead, or waste spark): compare firings
    const a = sec[0].t.analysis!;
    const events = ((a.events as Record<string, unknown>[] | undefined) ?? []).filter(
      (e) => e && typeof e === "object",
    );
    const unit = String(a.unit ?? "V");
    compared = events.length;
    if (events.length >= 3) {
      for (const m of ["burnTimeMs", "peak", "burnLevel", "oscillations"] as OddMetric[]) {
        const items = events
          .map((e, k) => ({ label: `firing ${k + 1} of ${events.length}`, value: num(e[m]) }))
          .filter((x): x is { label: string; value: number } => x.value != null);
        const f = oddOne(items, m, METRIC_UNIT[m] === "*" ? unit : METRIC_UNIT[m]);
        if (f) odd.push(f);
      }
    }
    burn = num((a.summary as Summary | undefined)?.burnTimeMs);
    osc = num((a.summary as Summary | undefined)?.oscillations);
  }
  const inj = analysed.filter((t) => t.analysis!.kind === "injector");
  if (inj.length >= 2) {
    const f = oddOne(
      inj
        .map((t, i) => ({ label: traceLabel(t, i), value: num((t.analysis!.summary as Summary)?.pulseWidthMs) }))
        .filter((x): x is { label: string; value: number } => x.value != null),
      "pulseWidthMs",
      "ms",
    );
    if (f) odd.push(f);
  }
  let lowCompression: CasePattern["lowCompression"] = null;
  for (const t of analysed.filter((t) => t.analysis!.kind === "relative-compression")) {
    const positions =
      ((t.analysis!.summary as Summary)?.positions as { position: number; relativePct: number }[] | undefined) ?? [];
    for (const p of positions) {
      if (typeof p?.relativePct === "number" && (lowCompression == null || p.relativePct < lowCompression.relativePct))
        lowCompression = { position: p.position, relativePct: p.relativePct };
    }
  }
  return {
    version: FEATURE_VERSION,
    kinds,
    compared,
    rpm: rpms.length ? median(rpms) : null,
    burnTimeMs: burn,
    oscillations: osc,
    odd,
    findings: [...findings].sort(),
    lowCompression,
  };
}

/** The feature vector of a pattern (FEATURE_DIMS Float32 values, NaN where unknown). */
export function patternVector(p: CasePattern): Float32Array {
  const v = new Float32Array(FEATURE_DIMS).fill(NaN);
  const oddOf = (m: OddMetric) => p.odd.find((o) => o.metric === m);
  if (p.burnTimeMs != null) v[DIM.burnMs] = p.burnTimeMs;
  const lr = (m: OddMetric) => {
    const o = oddOf(m);
    return o && o.ratio > 0 ? Math.log(o.ratio) : NaN;
  };
  v[DIM.burnOdd] = lr("burnTimeMs");
  v[DIM.peakOdd] = lr("peak");
  v[DIM.levelOdd] = lr("burnLevel");
  if (p.oscillations != null) v[DIM.oscMedian] = p.oscillations / 2;
  const oo = oddOf("oscillations");
  if (oo) v[DIM.oscOdd] = oo.ratio / 2;
  if (p.rpm != null) v[DIM.rpm] = p.rpm / 1000;
  if (p.lowCompression) v[DIM.compressionLow] = Math.log(Math.max(1, p.lowCompression.relativePct) / 100);
  v[DIM.pulseOdd] = lr("pulseWidthMs");
  PATTERN_FINDINGS.forEach((f, i) => (v[DIM.findings + i] = p.findings.includes(f) ? 1 : 0));
  KINDS.forEach((k, i) => (v[DIM.kinds + i] = p.kinds.includes(k) ? 1 : 0));
  return v;
}

/** True when the vector says anything about a waveform (not only which kinds were captured). */
export function hasWaveformFeatures(v: Float32Array): boolean {
  for (let i = 0; i < DIM.findings; i++) if (Number.isFinite(v[i])) return true;
  return false;
}

/** Weighted squared distance; one-sided features cost ONE_SIDED each. */
export function featureDistance(a: Float32Array, b: Float32Array, offB = 0): number {
  let d = 0;
  for (let i = 0; i < FEATURE_DIMS; i++) {
    const x = a[i];
    const y = b[offB + i];
    const fx = x === x; // not NaN
    const fy = y === y;
    if (fx && fy) {
      const t = x - y;
      d += WEIGHTS[i] * t * t;
    } else if (fx !== fy) d += WEIGHTS[i] * ONE_SIDED;
  }
  return d;
}

// ---------------------------------------------------------------------------------------------
// Reasons in words

function fmt(x: number): string {
  const a = Math.abs(x);
  if (a >= 100) return x.toFixed(0);
  if (a >= 10) return x.toFixed(1).replace(/\.0$/, "");
  return x.toFixed(2).replace(/0$/, "").replace(/\.0$/, "");
}

const METRIC_WORDS: Record<OddMetric, string> = {
  burnTimeMs: "burn",
  peak: "firing line",
  burnLevel: "spark line",
  oscillations: "coil ringing",
  pulseWidthMs: "injector pulse",
};

function isOdd(o: OddFact | undefined): o is OddFact {
  if (!o) return false;
  return o.metric === "oscillations" ? Math.abs(o.ratio) >= 2 : Math.abs(Math.log(o.ratio)) >= Math.log(1.25);
}

function describeOdd(o: OddFact): string {
  if (o.metric === "oscillations") {
    const n = (x: number) => `${fmt(x)} ${Math.round(x) === 1 ? "peak" : "peaks"}`;
    return `${o.label} coil ringing ${n(o.value)} against ${n(o.others)} on the others`;
  }
  const u = o.unit ? ` ${o.unit}` : "";
  return `${o.label} ${METRIC_WORDS[o.metric]} ${fmt(o.value)}${u} against ${fmt(o.others)}${u} on the others`;
}

/**
 * Why `entry` looks like `query`, in words, most telling first: a shared odd-cylinder pattern in
 * the same direction, shared findings, a similar burn time or rpm.
 */
export function similarityReasons(query: CasePattern, entry: CasePattern, max = 3): string[] {
  const out: string[] = [];
  for (const m of ["burnTimeMs", "peak", "burnLevel", "oscillations", "pulseWidthMs"] as OddMetric[]) {
    const a = query.odd.find((o) => o.metric === m);
    const b = entry.odd.find((o) => o.metric === m);
    if (!isOdd(a) || !isOdd(b)) continue;
    const sameWay =
      m === "oscillations"
        ? Math.sign(a.ratio) === Math.sign(b.ratio)
        : Math.sign(Math.log(a.ratio)) === Math.sign(Math.log(b.ratio));
    if (sameWay) out.push(`${describeOdd(b)}, like this case`);
  }
  if (
    query.lowCompression &&
    entry.lowCompression &&
    query.lowCompression.relativePct < 85 &&
    entry.lowCompression.relativePct < 85
  ) {
    out.push(
      `one cylinder at ${fmt(entry.lowCompression.relativePct)} % relative compression, like this case (${fmt(query.lowCompression.relativePct)} %)`,
    );
  }
  const shared = entry.findings.filter((f) => query.findings.includes(f) && f !== "low-compression");
  if (shared.length) out.push(`also flagged: ${shared.map((f) => FINDING_WORDS[f] ?? f).join(", ")}`);
  if (
    out.length === 0 &&
    query.burnTimeMs != null &&
    entry.burnTimeMs != null &&
    Math.abs(query.burnTimeMs - entry.burnTimeMs) <= 0.3
  ) {
    const evenA = !isOdd(query.odd.find((o) => o.metric === "burnTimeMs"));
    const evenB = !isOdd(entry.odd.find((o) => o.metric === "burnTimeMs"));
    out.push(
      `burn time ${fmt(entry.burnTimeMs)} ms${evenA && evenB ? " and even across the coils" : ""}, close to this case's ${fmt(query.burnTimeMs)} ms`,
    );
  }
  if (
    query.rpm != null &&
    entry.rpm != null &&
    Math.abs(query.rpm - entry.rpm) <= 0.2 * Math.max(query.rpm, entry.rpm)
  ) {
    out.push(`captured at ${fmt(entry.rpm)} rpm (this case ${fmt(query.rpm)} rpm)`);
  }
  if (out.length === 0) out.push("the nearest waveform pattern in the casebook");
  return out.slice(0, max);
}

// ---------------------------------------------------------------------------------------------
// The in-memory index

export interface SimilarMatch {
  entryId: string;
  distance: number;
  /** 1 / (1 + distance) */
  similarity: number;
}

/** All entry vectors in one Float32Array, kept in step with the casebook by `rev`. */
export class SimilarIndex {
  private data = new Float32Array(0);
  private ids: string[] = [];
  private live = new Uint8Array(0);
  private slot = new Map<string, number>();
  private rev = -1;

  get size(): number {
    let n = 0;
    for (let i = 0; i < this.ids.length; i++) n += this.live[i];
    return n;
  }

  private ensure(n: number): void {
    if (n * FEATURE_DIMS <= this.data.length) return;
    const cap = Math.max(1024, n * 2);
    const d = new Float32Array(cap * FEATURE_DIMS);
    d.set(this.data);
    this.data = d;
    const l = new Uint8Array(cap);
    l.set(this.live);
    this.live = l;
  }

  /** Adds or replaces one entry's vector; `visible` false takes it out of the results. */
  put(entryId: string, vector: Float32Array | null, visible: boolean): void {
    let s = this.slot.get(entryId);
    if (s === undefined) {
      if (!vector) return;
      s = this.ids.length;
      this.ensure(s + 1);
      this.ids.push(entryId);
      this.slot.set(entryId, s);
    }
    if (vector) this.data.set(vector.subarray(0, FEATURE_DIMS), s * FEATURE_DIMS);
    this.live[s] = visible && (vector ? hasWaveformFeatures(vector) : this.live[s] === 1) ? 1 : 0;
  }

  /** The k nearest visible entries, nearest first (on a tie, the one published first). */
  nearest(query: Float32Array, k: number, exclude?: ReadonlySet<string>): SimilarMatch[] {
    const n = this.ids.length;
    const bestD = new Float64Array(k).fill(Infinity);
    const bestI = new Int32Array(k).fill(-1);
    const data = this.data;
    for (let i = 0; i < n; i++) {
      if (!this.live[i]) continue;
      const d = featureDistance(query, data, i * FEATURE_DIMS);
      if (d >= bestD[k - 1]) continue;
      if (exclude && exclude.has(this.ids[i])) continue;
      let j = k - 1;
      while (j > 0 && bestD[j - 1] > d) {
        bestD[j] = bestD[j - 1];
        bestI[j] = bestI[j - 1];
        j--;
      }
      bestD[j] = d;
      bestI[j] = i;
    }
    const out: SimilarMatch[] = [];
    for (let j = 0; j < k; j++) {
      if (bestI[j] < 0) break;
      const dist = Math.sqrt(bestD[j]);
      out.push({
        entryId: this.ids[bestI[j]],
        distance: Math.round(dist * 1000) / 1000,
        similarity: Math.round((1 / (1 + dist)) * 1000) / 1000,
      });
    }
    return out;
  }

  /** Loads what changed in the casebook since the last call (everything the first time), inside the caller's unit. */
  async sync(tx: Tx): Promise<void> {
    const { casebookEntry, casebookVector } = schema;
    const head = Number(
      (
        await tx
          .select({ rev: sql<number>`coalesce(max(${casebookEntry.rev}), 0)` })
          .from(casebookEntry)
          .get()
      )?.rev ?? 0,
    );
    if (head === this.rev) return;
    const rows = await tx
      .select({
        id: casebookEntry.id,
        hidden: casebookEntry.hidden,
        vector: casebookVector.vector,
        version: casebookVector.version,
      })
      .from(casebookEntry)
      .leftJoin(casebookVector, eq(casebookVector.entryId, casebookEntry.id))
      .where(gt(casebookEntry.rev, this.rev))
      .orderBy(asc(casebookEntry.rev))
      .all();
    for (const r of rows) {
      const vec = r.vector && r.version === FEATURE_VERSION ? vectorFromBlob(r.vector) : null;
      this.put(r.id, vec, !r.hidden);
    }
    this.rev = Math.max(this.rev, head);
  }
}

export function vectorToBlob(v: Float32Array): Buffer {
  return Buffer.from(v.buffer.slice(v.byteOffset, v.byteOffset + FEATURE_DIMS * 4));
}

export function vectorFromBlob(b: Uint8Array | ArrayBuffer): Float32Array {
  const bytes = b instanceof Uint8Array ? b : new Uint8Array(b);
  const copy = new Uint8Array(bytes.byteLength);
  copy.set(bytes);
  return new Float32Array(copy.buffer, 0, Math.min(FEATURE_DIMS, copy.byteLength >> 2));
}

const indexes = new WeakMap<Db, SimilarIndex>();

/** The index of this database, loaded on first use and brought up to date on every call. */
export async function similarIndex(db: Db): Promise<SimilarIndex> {
  let ix = indexes.get(db);
  if (!ix) {
    ix = new SimilarIndex();
    indexes.set(db, ix);
  }
  const index = ix;
  await db.read((tx) => index.sync(tx));
  return index;
}

/** The stored pattern of an entry. */
export async function entryPattern(tx: Tx, entryId: string): Promise<CasePattern | null> {
  const row = await tx
    .select({ pattern: schema.casebookVector.pattern })
    .from(schema.casebookVector)
    .where(eq(schema.casebookVector.entryId, entryId))
    .get();
  return (row?.pattern as unknown as CasePattern) ?? null;
}

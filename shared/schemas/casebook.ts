/**
 * The casebook's request schemas (zod 4) and response shapes, shared by the client and the server.
 */
import { z } from "zod";
import { systems } from "../domain/case-status";

/** Snippets mark matches between these two characters; stored text never contains them. */
export const SNIPPET_OPEN = "\u0002";
export const SNIPPET_CLOSE = "\u0003";

const blankToUndefined = (v: unknown) => (v === "" || v === null ? undefined : v);
const opt = <T extends z.ZodType>(s: T) => z.preprocess(blankToUndefined, s.optional());
const facetText = opt(z.string().trim().max(80));

/** GET /api/casebook/search */
export const casebookSearchQuerySchema = z
  .object({
    q: opt(z.string().max(200, "Search for at most 200 characters.")),
    make: facetText,
    model: facetText,
    engine: facetText,
    system: opt(z.enum(systems)),
    code: opt(
      z
        .string()
        .trim()
        .toUpperCase()
        .regex(/^[PCBU][0-9A-F]{4}$/, "A trouble code is a letter P, C, B or U and four characters, e.g. P0303."),
    ),
    yearFrom: opt(z.coerce.number().int().min(1900).max(2100)),
    yearTo: opt(z.coerce.number().int().min(1900).max(2100)),
    confirmed: opt(z.enum(["true", "false", "1", "0"]).transform((v) => v === "true" || v === "1")),
    sort: opt(z.enum(["relevance", "recent"])).transform((v) => v ?? "relevance"),
    page: opt(z.coerce.number().int().min(1).max(500)).transform((v) => v ?? 1),
    pageSize: opt(z.coerce.number().int().min(1).max(50)).transform((v) => v ?? 20),
  })
  .refine((v) => v.yearFrom == null || v.yearTo == null || v.yearFrom <= v.yearTo, {
    path: ["yearTo"],
    message: "The end year comes before the start year.",
  });
export type CasebookSearchQueryInput = z.input<typeof casebookSearchQuerySchema>;
export type CasebookSearchQueryParsed = z.output<typeof casebookSearchQuerySchema>;

/** POST /api/casebook/:id/vote — helpful: true records the vote (once per user), false takes it back. */
export const casebookVoteSchema = z.object({ helpful: z.boolean().default(true) });

const editText = (label: string, max: number) => z.string().trim().min(1, `${label} cannot be empty.`).max(max);

/** PATCH /api/admin/casebook/:id */
export const casebookEditSchema = z
  .strictObject({
    hidden: z.boolean().optional(),
    hiddenReason: z.string().trim().max(500).optional(),
    title: editText("Title", 200).optional(),
    complaint: editText("Complaint", 5000).optional(),
    diagnosis: editText("Diagnosis", 5000).optional(),
    rootCause: editText("Root cause", 5000).optional(),
    fix: editText("Fix", 5000).optional(),
    testsToConfirm: z.string().trim().max(5000).optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: "Nothing to change." });
export type CasebookEditInput = z.input<typeof casebookEditSchema>;

/** GET /api/cases/:id/similar */
export const similarQuerySchema = z.object({
  limit: opt(z.coerce.number().int().min(1).max(20)).transform((v) => v ?? 5),
});

// ---------------------------------------------------------------------------------------------
// Responses

export const facetDims = ["make", "model", "year", "engine", "system", "code", "confirmed"] as const;
export type FacetDim = (typeof facetDims)[number];

export interface FacetCount {
  /** the value to send back as the filter */
  value: string;
  label: string;
  count: number;
}

export interface CasebookSearchHit {
  id: string;
  title: string;
  vehicle: string;
  codes: string[];
  rootCause: string;
  /** text with each match between SNIPPET_OPEN and SNIPPET_CLOSE */
  snippet: string;
  /** relevance (−bm25, higher is better); null when not ranked by relevance */
  score: number | null;
  confirmed: boolean;
  publishedAt: string;
  helpfulCount?: number;
}

export interface CasebookSearchResult {
  total: number;
  page: number;
  pageSize: number;
  pages: number;
  sort: "relevance" | "recent";
  results: CasebookSearchHit[];
  /** per dimension, the counts with every other filter applied (not the dimension's own) */
  facets: Record<FacetDim, FacetCount[]>;
  /** bm25 over `candidates` results (all of them when `exact`), or newest first */
  ranking: { method: "bm25" | "recent"; candidates: number; exact: boolean };
  match: string | null;
}

export interface CasebookVehicle {
  year: number | null;
  make: string | null;
  model: string | null;
  engine: string | null;
  fuel: string | null;
  transmission: string | null;
  /** rounded to the nearest 1,000 */
  mileage: number | null;
  mileageUnit: string | null;
  /** positions 1–8, 10, 11 of the VIN, the check digit and serial masked: "1M8GDM9A*KP******" */
  vinModel: string | null;
}

export interface CasebookTrace {
  id: string;
  name: string;
  kind: string;
  samples: number;
  sampleRateHz: number;
  t0: number;
  durationS: number;
  channels: { name: string; unit: string | null; min: number; max: number }[];
  settings: Record<string, unknown>;
  analysis: Record<string, unknown> | null;
  windowUrl: string;
}

export interface CasebookAnnotation {
  id: string;
  traceId: string;
  kind: "pin" | "span" | "level" | "note";
  t0: number;
  t1: number | null;
  level: number | null;
  label: string | null;
  channel: string | null;
  color: string;
}

/** The anonymised entry as stored (casebook_entry.body). */
export interface CasebookEntryBody {
  vehicle: CasebookVehicle;
  complaint: string;
  symptoms: string[];
  conditions: Record<string, unknown>;
  codes: { code: string; description: string }[];
  system: string | null;
  testsDone: string;
  partsReplaced: string;
  answer: { diagnosis: string; rootCause: string; fix: string; testsToConfirm: string; round: number };
  outcome: { confirmed: boolean; note: string; rating: number | null };
  traces: CasebookTrace[];
  annotations: CasebookAnnotation[];
  comparison: unknown;
}

/** GET /api/casebook/:id */
export interface CasebookEntryView extends CasebookEntryBody {
  id: string;
  title: string;
  publishedAt: string;
  updatedAt: string;
  helpfulCount: number;
  viewCount: number;
  voted: boolean;
  hidden: boolean;
  hiddenReason: string | null;
  safetyNote: string;
  abilities: { vote: boolean; moderate: boolean };
}

export interface SimilarCase {
  id: string;
  title: string;
  vehicle: string;
  codes: string[];
  rootCause: string;
  similarity: number;
  distance: number;
  reasons: string[];
  helpfulCount: number;
}

/** GET /api/cases/:id/similar */
export interface SimilarCasesResult {
  caseId: string;
  /** why there are no results, when there are none */
  note: string | null;
  results: SimilarCase[];
}

/** GET /api/experts/:id/record */
export interface ExpertCasebookRecord {
  expertId: string;
  entries: number;
  confirmed: number;
  helpfulVotes: number;
  views: number;
  /** the expert's own entries (for the expert themself and admins only) */
  entryIds?: string[];
}

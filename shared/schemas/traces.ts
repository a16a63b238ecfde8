/**
 * Request schemas of the trace and photo endpoints (zod 4), shared by the client and the routes.
 */
import { z } from "zod";
import { captureSettingsSchema } from "./capture-settings";

/**
 * Most buckets a window query may ask for (about two points per pixel of a wide screen). The
 * decimation itself accepts up to MAX_DECIMATE_WIDTH (shared/trace/decimate.ts), a separate and
 * larger limit of the computation.
 */
export const MAX_WINDOW_WIDTH = 8000;
export const DEFAULT_WINDOW_WIDTH = 2000;

/** Ids in the address: server-made UUIDs (anything else cannot exist, so it answers 404 upstream). */
export const idParamSchema = z.object({
  id: z.string().trim().min(1, { error: "Missing id." }).max(64, { error: "That id is too long." }),
});

const queryValue = (v: unknown) => {
  const x = Array.isArray(v) ? v[v.length - 1] : v;
  return typeof x === "string" && x.trim() === "" ? undefined : x;
};
const queryNumber = (label: string) =>
  z.preprocess(
    (v) => {
      const x = queryValue(v);
      return typeof x === "string" ? Number(x) : x;
    },
    z
      .number({ error: `${label} must be a number (seconds).` })
      .min(-1e9, { error: `${label} is out of range.` })
      .max(1e9, { error: `${label} is out of range.` })
      .optional(),
  );

/**
 * GET /api/traces/:id/window?t0=&t1=&width= — times in seconds on the trace's own time axis;
 * t0/t1 default to the whole trace; width is the number of min/max buckets.
 */
export const traceWindowQuerySchema = z
  .object({
    t0: queryNumber("t0"),
    t1: queryNumber("t1"),
    width: z.preprocess(
      (v) => {
        const x = queryValue(v);
        return typeof x === "string" && /^\s*\d+\s*$/.test(x) ? Number(x) : x;
      },
      z
        .number({ error: "width must be a whole number of buckets." })
        .int({ error: "width must be a whole number of buckets." })
        .min(1, { error: "width must be at least 1." })
        .max(MAX_WINDOW_WIDTH, { error: `width must be at most ${MAX_WINDOW_WIDTH}.` })
        .default(DEFAULT_WINDOW_WIDTH),
    ),
  })
  .refine((q) => q.t0 === undefined || q.t1 === undefined || q.t1 > q.t0, {
    error: "t1 must be later than t0.",
    path: ["t1"],
  });
export type TraceWindowQuery = z.output<typeof traceWindowQuerySchema>;

/**
 * The answer of the window endpoint: bucket k covers [t0 + k·(t1−t0)/width, t0 + (k+1)·(t1−t0)/width)
 * (edges exactly as defined in shared/trace/decimate.ts, which absorbs rounding at the edges).
 */
export interface TraceWindowResponse {
  t: number[];
  series: { name: string; min: number[]; max: number[] }[];
}

/** The JSON of the multipart field `settings`: a string holding the capture settings. */
export const settingsFieldSchema = z
  .string({ error: 'Send the capture settings as JSON in the field "settings".' })
  .transform((s, ctx) => {
    try {
      return JSON.parse(s) as unknown;
    } catch {
      ctx.addIssue({ code: "custom", message: "The capture settings are not valid JSON." });
      return z.NEVER;
    }
  })
  .pipe(captureSettingsSchema);

/** The text fields of POST /api/cases/:id/traces (the file itself is the field `file`). */
export const traceUploadFieldsSchema = z.object({
  settings: settingsFieldSchema,
  /** a name for the trace; defaults to the file's name */
  name: z
    .string({ error: "The name must be text." })
    .trim()
    .max(120, { error: "The name is too long (at most 120 characters)." })
    .optional(),
});
export type TraceUploadFields = z.output<typeof traceUploadFieldsSchema>;

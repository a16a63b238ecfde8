/**
 * Payloads of the live-review socket events (zod 4), validated by the server on every event and
 * used by the client to build them. The event names and their typed maps are in shared/realtime.ts.
 */
import { z } from "zod";
import { probeKinds, traceKinds } from "./capture-settings";

export const annotationKinds = ["pin", "span", "level", "note"] as const;
export type AnnotationKind = (typeof annotationKinds)[number];

export const messageKinds = ["text", "data_request"] as const;
export type MessageKind = (typeof messageKinds)[number];

/** Longest label of a mark (a note's text is its label). */
export const MAX_LABEL = 500;
/** Longest chat message. */
export const MAX_MESSAGE = 4000;

const id = (what: string) =>
  z
    .string({ error: `${what} is required.` })
    .trim()
    .min(1, { error: `${what} is required.` })
    .max(64, { error: `${what} is too long.` });
const time = (what: string) =>
  z.number({ error: `${what} must be a number (seconds).` }).finite({ error: `${what} must be a finite number.` });
const volts = z.number({ error: "level must be a number." }).finite({ error: "level must be a finite number." });
/** A client-made id (e.g. crypto.randomUUID()) that makes a retried create idempotent. */
const clientId = z
  .string()
  .trim()
  .min(8, { error: "clientId must have 8–64 characters." })
  .max(64, { error: "clientId must have 8–64 characters." })
  .regex(/^[A-Za-z0-9_-]+$/, { error: "clientId may use letters, digits, - and _ only." });
const label = z
  .string()
  .trim()
  .max(MAX_LABEL, { error: `Keep the label under ${MAX_LABEL} characters.` });
const channel = z.string().trim().min(1).max(80);

/** `case:join` — enter a case's room; `since` is the last seq the client has applied (0 or absent: nothing). */
export const caseJoinSchema = z
  .object({
    caseId: id("caseId"),
    since: z
      .number()
      .int({ error: "since must be a whole number." })
      .min(0, { error: "since cannot be negative." })
      .optional(),
  })
  .strict();
export type CaseJoin = z.infer<typeof caseJoinSchema>;

/** What each kind needs: a span has an end, a level has a voltage, a note has text. */
function checkKind(
  a: { kind: AnnotationKind; t0?: number; t1?: number | null; level?: number | null; label?: string | null },
  ctx: z.RefinementCtx,
) {
  if (a.kind === "span") {
    if (a.t1 == null) ctx.addIssue({ code: "custom", path: ["t1"], message: "A span needs its end time t1." });
    else if (a.t0 != null && a.t1 === a.t0)
      ctx.addIssue({ code: "custom", path: ["t1"], message: "A span needs an end time different from its start." });
  } else if (a.t1 != null) {
    ctx.addIssue({ code: "custom", path: ["t1"], message: "Only a span has an end time." });
  }
  if (a.kind === "level" && a.level == null)
    ctx.addIssue({ code: "custom", path: ["level"], message: "A level line needs its level." });
  if ((a.kind === "span" || a.kind === "note") && a.level != null)
    ctx.addIssue({ code: "custom", path: ["level"], message: `A ${a.kind} has no level.` });
  if (a.kind === "note" && !a.label)
    ctx.addIssue({ code: "custom", path: ["label"], message: "Write the note's text." });
}

/** `annotation:create` */
export const annotationCreateSchema = z
  .object({
    traceId: id("traceId"),
    kind: z.enum(annotationKinds, { error: `kind must be one of ${annotationKinds.join(", ")}.` }),
    t0: time("t0"),
    t1: time("t1").optional(),
    level: volts.optional(),
    label: label.optional(),
    channel: channel.optional(),
    clientId: clientId.optional(),
  })
  .strict()
  .superRefine(checkKind);
export type AnnotationCreate = z.infer<typeof annotationCreateSchema>;

/** `annotation:update` — the author changes the time(s), level or label; null clears t1/level/label. */
export const annotationUpdateSchema = z
  .object({
    id: id("id"),
    t0: time("t0").optional(),
    t1: time("t1").nullable().optional(),
    level: volts.nullable().optional(),
    label: label.nullable().optional(),
  })
  .strict()
  .refine((u) => u.t0 !== undefined || u.t1 !== undefined || u.level !== undefined || u.label !== undefined, {
    message: "Say what to change: t0, t1, level or label.",
  });
export type AnnotationUpdate = z.infer<typeof annotationUpdateSchema>;

/** Checks a mark after an update has been merged into it (same rules as a new one). */
export const annotationShapeSchema = z
  .object({
    kind: z.enum(annotationKinds),
    t0: time("t0"),
    t1: z.number().nullable().optional(),
    level: z.number().nullable().optional(),
    label: z.string().nullable().optional(),
  })
  .superRefine(checkKind);

/** `annotation:delete` */
export const annotationDeleteSchema = z.object({ id: id("id") }).strict();
export type AnnotationDelete = z.infer<typeof annotationDeleteSchema>;

/**
 * The scope settings an expert asks for (all optional: only what matters for this capture).
 * Same units as the capture settings: volts/division, seconds/division, trigger level in volts.
 */
export const requestedSettingsSchema = z
  .object({
    probe: z.enum(probeKinds).optional(),
    voltsPerDiv: z.number().positive().max(10000).optional(),
    timePerDivS: z.number().positive().max(100).optional(),
    triggerLevel: z.number().min(-100000).max(100000).optional(),
    triggerSlope: z.enum(["rising", "falling"]).optional(),
    triggerMode: z.enum(["auto", "normal", "single"]).optional(),
    coupling: z.enum(["dc", "ac"]).optional(),
    kvPerVolt: z.number().positive().max(1000).optional(),
  })
  .strict();
export type RequestedSettings = z.infer<typeof requestedSettingsSchema>;

/** A request for more data: which capture, on which cylinder, with which settings, under which conditions. */
export const dataRequestSchema = z
  .object({
    capture: z.enum(traceKinds, { error: `capture must be one of ${traceKinds.join(", ")}.` }),
    /** the cylinder to connect to; absent = not cylinder-specific */
    cylinder: z
      .number()
      .int()
      .min(1, { error: "Cylinders are numbered from 1." })
      .max(16, { error: "At most 16 cylinders." })
      .optional(),
    settings: requestedSettingsSchema.optional(),
    /** engine conditions during the capture, e.g. "warm, 2500 rpm, then snap throttle" */
    conditions: z.string().trim().max(500, { error: "Keep the conditions under 500 characters." }).optional(),
  })
  .strict();
export type DataRequest = z.infer<typeof dataRequestSchema>;

/** `chat:send` — a text message, or (with `request`) a request for more data with optional text. */
export const chatSendSchema = z
  .object({
    text: z
      .string()
      .trim()
      .max(MAX_MESSAGE, { error: `Keep the message under ${MAX_MESSAGE} characters.` })
      .default(""),
    request: dataRequestSchema.optional(),
    clientId: clientId.optional(),
  })
  .strict()
  .refine((m) => m.text.length > 0 || m.request != null, { path: ["text"], message: "Write a message." });
export type ChatSend = z.input<typeof chatSendSchema>;

/** `chat:typing` */
export const chatTypingSchema = z.object({ typing: z.boolean() }).strict();

/** `pointer:move` — where the pointer is on a trace; `traceId: null` when it leaves the plot. */
export const pointerMoveSchema = z.union([
  z.object({ traceId: id("traceId"), t: time("t"), v: z.number().finite() }).strict(),
  z.object({ traceId: z.null() }).strict(),
]);
export type PointerMove = z.infer<typeof pointerMoveSchema>;

/** `view:follow` — the sender's visible window, for the participants who follow it. */
export const viewFollowSchema = z
  .object({ traceId: id("traceId"), t0: time("t0"), t1: time("t1") })
  .strict()
  .refine((v) => v.t1 > v.t0, { path: ["t1"], message: "t1 must be after t0." });
export type ViewFollow = z.infer<typeof viewFollowSchema>;

const queryValue = (v: unknown) => {
  const x = Array.isArray(v) ? v[v.length - 1] : v;
  return typeof x === "string" && x.trim() === "" ? undefined : x;
};

/** `GET /api/cases/:id/annotations?since=` and `…/messages?since=` */
export const sinceQuerySchema = z.object({
  since: z.preprocess(
    (v) => {
      const x = queryValue(v);
      return typeof x === "string" && /^\s*\d+\s*$/.test(x) ? Number(x) : x;
    },
    z
      .number({ error: "since must be a whole number." })
      .int({ error: "since must be a whole number." })
      .min(0)
      .optional(),
  ),
});

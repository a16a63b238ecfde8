import { sqliteTable, text, integer, real, index } from "drizzle-orm/sqlite-core";
import { user } from "./auth";
import { shop } from "./shops";
import type { TraceChannelMeta } from "../../../shared/trace/types";

export const caseTable = sqliteTable(
  "case",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shop.id, { onDelete: "cascade" }),
    createdBy: text("created_by").references(() => user.id, { onDelete: "set null" }),
    /** shared/domain/case-status.ts */
    status: text("status").notNull().default("draft"),
    title: text("title"),
    vin: text("vin"),
    vinCheckOverride: integer("vin_check_override", { mode: "boolean" }).notNull().default(false),
    year: integer("year"),
    make: text("make"),
    model: text("model"),
    engine: text("engine"),
    fuel: text("fuel"),
    mileage: integer("mileage"),
    mileageUnit: text("mileage_unit"),
    transmission: text("transmission"),
    complaint: text("complaint"),
    /** JSON array of checklist symptoms */
    symptoms: text("symptoms", { mode: "json" }).$type<string[]>(),
    /** JSON { temperature, load[], occurrence } */
    conditions: text("conditions", { mode: "json" }).$type<Record<string, unknown>>(),
    /** JSON array of normalised trouble codes */
    codes: text("codes", { mode: "json" }).$type<string[]>(),
    system: text("system"),
    testsDone: text("tests_done"),
    partsReplaced: text("parts_replaced"),
    notes: text("notes"),
    /** set by the queue */
    tier: text("tier"),
    priceCents: integer("price_cents"),
    deadlineAt: integer("deadline_at", { mode: "timestamp_ms" }),
    expertId: text("expert_id").references(() => user.id, { onDelete: "set null" }),
    claimedAt: integer("claimed_at", { mode: "timestamp_ms" }),
    submittedAt: integer("submitted_at", { mode: "timestamp_ms" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("case_shop_idx").on(t.shopId, t.status), index("case_expert_idx").on(t.expertId)],
);

/** Who did what when: every status change and notable act on a case. */
export const caseEvent = sqliteTable(
  "case_event",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    actorId: text("actor_id"),
    type: text("type").notNull(),
    fromStatus: text("from_status"),
    toStatus: text("to_status"),
    data: text("data", { mode: "json" }).$type<Record<string, unknown>>(),
    at: integer("at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("case_event_case_idx").on(t.caseId)],
);

export const trace = sqliteTable(
  "trace",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    uploadedBy: text("uploaded_by").references(() => user.id, { onDelete: "set null" }),
    name: text("name").notNull(),
    kind: text("kind").notNull(),
    /** JSON capture settings (shared/schemas/capture-settings.ts) */
    settings: text("settings", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
    sha256: text("sha256").notNull(),
    originalBytes: integer("original_bytes").notNull(),
    /** paths relative to the data directory */
    originalPath: text("original_path").notNull(),
    dataPath: text("data_path").notNull(),
    samples: integer("samples").notNull(),
    sampleRateHz: real("sample_rate_hz").notNull(),
    t0: real("t0").notNull().default(0),
    durationS: real("duration_s").notNull(),
    /** JSON [{ name, unit, min, max }] */
    channels: text("channels", { mode: "json" }).$type<TraceChannelMeta[]>().notNull(),
    /** JSON analysis result computed once at upload (shared/analysis) */
    analysis: text("analysis", { mode: "json" }).$type<Record<string, unknown>>(),
    /** the file name as uploaded (shown and used for the download; never a path on disk) */
    originalName: text("original_name"),
    /** JSON notes from the parser that did not stop it, each naming its line */
    warnings: text("warnings", { mode: "json" }).$type<string[]>(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("trace_case_idx").on(t.caseId), index("trace_sha_idx").on(t.sha256)],
);

export const photo = sqliteTable(
  "photo",
  {
    id: text("id").primaryKey(),
    caseId: text("case_id")
      .notNull()
      .references(() => caseTable.id, { onDelete: "cascade" }),
    uploadedBy: text("uploaded_by").references(() => user.id, { onDelete: "set null" }),
    name: text("name").notNull(),
    mime: text("mime").notNull(),
    bytes: integer("bytes").notNull(),
    sha256: text("sha256").notNull(),
    path: text("path").notNull(),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("photo_case_idx").on(t.caseId), index("photo_sha_idx").on(t.sha256)],
);

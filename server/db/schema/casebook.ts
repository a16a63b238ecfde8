import { sqliteTable, text, integer, blob, index, uniqueIndex } from "drizzle-orm/sqlite-core";
import { user } from "./auth";
import { caseTable } from "./cases";

/**
 * The casebook: resolved cases, anonymised, as searchable entries.
 *
 * `casebook_entry` is both the record and the external content of the FTS5 index
 * `casebook_fts` (created with its triggers in the custom migration "casebook-fts"): the text
 * columns vehicle … tags are the indexed columns, `doc_id` is the FTS rowid. The triggers keep the
 * index in step with every insert, every edit of an indexed column and every hide/unhide; a hidden
 * entry is not in the index at all (the index's content is the view `casebook_fts_source`, which
 * leaves hidden entries out, so an FTS5 integrity-check compares like with like).
 *
 * Nothing here names a shop or a person: `case_id` and `expert_id` link back for the desk (the
 * expert's record, the case's own "similar" panel) and are never sent to casebook readers.
 */
export const casebookEntry = sqliteTable(
  "casebook_entry",
  {
    /** the FTS5 rowid; never changes */
    docId: integer("doc_id").primaryKey({ autoIncrement: true }),
    /** the public id */
    id: text("id").notNull().unique(),
    caseId: text("case_id").references(() => caseTable.id, { onDelete: "set null" }),
    expertId: text("expert_id").references(() => user.id, { onDelete: "set null" }),
    title: text("title").notNull(),
    // ---- the indexed text (flattened, anonymised) ----
    /** "2016 Veltra Quillon 2.0 I4 gasoline automatic" */
    vehicle: text("vehicle").notNull().default(""),
    complaint: text("complaint").notNull().default(""),
    /** symptom labels, conditions, tests already done and parts already replaced */
    symptoms: text("symptoms").notNull().default(""),
    /** "P0303 Cylinder 3 misfire detected; …" */
    codes: text("codes").notNull().default(""),
    /** the expert's diagnosis and the tests that confirm it */
    diagnosis: text("diagnosis").notNull().default(""),
    rootCause: text("root_cause").notNull().default(""),
    fix: text("fix").notNull().default(""),
    /** facet tokens for filtered ranking (server/services/casebook-search-engine.ts facetTag); not shown */
    tags: text("tags").notNull().default(""),
    // ---- facets ----
    make: text("make"),
    makeKey: text("make_key"),
    model: text("model"),
    modelKey: text("model_key"),
    year: integer("year"),
    engine: text("engine"),
    engineKey: text("engine_key"),
    system: text("system"),
    /** JSON array of normalised trouble codes */
    codeList: text("code_list", { mode: "json" }).$type<string[]>().notNull(),
    /** the shop confirmed the fix */
    confirmed: integer("confirmed", { mode: "boolean" }).notNull().default(true),
    /** the shop's 1–5 rating of the answer */
    rating: integer("rating"),
    /** JSON: the anonymised entry (vehicle, traces, measurements, annotations, answer …) */
    body: text("body", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
    hidden: integer("hidden", { mode: "boolean" }).notNull().default(false),
    hiddenReason: text("hidden_reason"),
    hiddenBy: text("hidden_by"),
    hiddenAt: integer("hidden_at", { mode: "timestamp_ms" }),
    editedBy: text("edited_by"),
    /** increases with every change (the search worker reloads rows with rev > its own) */
    rev: integer("rev").notNull(),
    publishedAt: integer("published_at", { mode: "timestamp_ms" }).notNull(),
    updatedAt: integer("updated_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [
    uniqueIndex("casebook_entry_case_idx").on(t.caseId),
    index("casebook_entry_expert_idx").on(t.expertId),
    index("casebook_entry_rev_idx").on(t.rev),
    index("casebook_entry_published_idx").on(t.publishedAt),
  ],
);

/** "This helped": one per user and entry. */
export const casebookVote = sqliteTable(
  "casebook_vote",
  {
    entryId: text("entry_id")
      .notNull()
      .references(() => casebookEntry.id, { onDelete: "cascade" }),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [uniqueIndex("casebook_vote_unique").on(t.entryId, t.userId), index("casebook_vote_user_idx").on(t.userId)],
);

/** Who has read an entry (the view count is the number of distinct readers). */
export const casebookView = sqliteTable(
  "casebook_view",
  {
    entryId: text("entry_id")
      .notNull()
      .references(() => casebookEntry.id, { onDelete: "cascade" }),
    userId: text("user_id")
      .notNull()
      .references(() => user.id, { onDelete: "cascade" }),
    firstAt: integer("first_at", { mode: "timestamp_ms" }).notNull(),
    lastAt: integer("last_at", { mode: "timestamp_ms" }).notNull(),
    count: integer("count").notNull().default(1),
  },
  (t) => [uniqueIndex("casebook_view_unique").on(t.entryId, t.userId)],
);

/**
 * The waveform pattern of an entry, for "similar cases": a fixed-length Float32 vector
 * (server/services/similar.ts FEATURE_DIMS; NaN where a feature is unknown) and the facts behind
 * it in words (which coil was odd, by how much), for the reasons shown with a match.
 */
export const casebookVector = sqliteTable("casebook_vector", {
  entryId: text("entry_id")
    .primaryKey()
    .references(() => casebookEntry.id, { onDelete: "cascade" }),
  /** layout version of the vector (FEATURE_VERSION) */
  version: integer("version").notNull(),
  vector: blob("vector", { mode: "buffer" }).notNull(),
  /** JSON pattern facts (server/services/similar.ts CasePattern) */
  pattern: text("pattern", { mode: "json" }).$type<Record<string, unknown>>().notNull(),
  /** a quick filter: the kinds of traces the case had */
  kinds: text("kinds").notNull().default(""),
});

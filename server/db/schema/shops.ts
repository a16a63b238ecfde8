import { sqliteTable, text, integer, index } from "drizzle-orm/sqlite-core";
import { user } from "./auth";

/** A shop is the tenant: its technicians and owner see its cases and nobody else's. */
export const shop = sqliteTable("shop", {
  id: text("id").primaryKey(),
  name: text("name").notNull(),
  stripeCustomerId: text("stripe_customer_id"),
  createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
});

export const invite = sqliteTable(
  "invite",
  {
    id: text("id").primaryKey(),
    shopId: text("shop_id")
      .notNull()
      .references(() => shop.id, { onDelete: "cascade" }),
    email: text("email").notNull(),
    name: text("name"),
    /** sha-256 of the one-time token sent by mail; the token itself is never stored */
    tokenHash: text("token_hash").notNull().unique(),
    invitedBy: text("invited_by").references(() => user.id, { onDelete: "set null" }),
    expiresAt: integer("expires_at", { mode: "timestamp_ms" }).notNull(),
    acceptedAt: integer("accepted_at", { mode: "timestamp_ms" }),
    revokedAt: integer("revoked_at", { mode: "timestamp_ms" }),
    createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
  },
  (t) => [index("invite_shop_idx").on(t.shopId)],
);

/** An expert's application and standing: specialties (systems) and makes, approved by an admin. */
export const expertProfile = sqliteTable("expert_profile", {
  userId: text("user_id")
    .primaryKey()
    .references(() => user.id, { onDelete: "cascade" }),
  /** JSON array of systems (shared/domain/case-status.ts `systems`) */
  systems: text("systems", { mode: "json" }).$type<string[]>().notNull(),
  /** JSON array of vehicle makes; empty = any make */
  makes: text("makes", { mode: "json" }).$type<string[]>().notNull(),
  bio: text("bio"),
  yearsExperience: integer("years_experience"),
  /** pending | approved | rejected | suspended */
  status: text("status").notNull().default("pending"),
  available: integer("available", { mode: "boolean" }).notNull().default(false),
  maxOpenCases: integer("max_open_cases").notNull().default(3),
  stripeAccountId: text("stripe_account_id"),
  decidedBy: text("decided_by"),
  decidedAt: integer("decided_at", { mode: "timestamp_ms" }),
  createdAt: integer("created_at", { mode: "timestamp_ms" }).notNull(),
});

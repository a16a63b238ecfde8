import { schema } from "../../server/db/client";
import { ctxOf, uniq, type HasCtx } from "./context";

export type ShopRow = typeof schema.shop.$inferSelect;

/** Invented shop names for tests and the demo (no real businesses). */
const SHOP_NAMES = [
  "Cinderwick Auto Works",
  "Harrowvale Motor Bay",
  "Tollbright Service Garage",
  "Quillby Lane Repairs",
  "Emberlow Street Motors",
];

/** Inserts a shop (the tenant). */
export async function createShop(on: HasCtx, opts: { name?: string; id?: string } = {}): Promise<ShopRow> {
  const ctx = ctxOf(on);
  const row: ShopRow = {
    id: opts.id ?? crypto.randomUUID(),
    name: opts.name ?? `${SHOP_NAMES[Math.floor(Math.random() * SHOP_NAMES.length)]} ${uniq()}`,
    stripeCustomerId: null,
    createdAt: ctx.now(),
  };
  await ctx.db.write((tx) => tx.insert(schema.shop).values(row).run());
  return row;
}

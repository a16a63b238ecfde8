import { schema } from "../../server/db/client";
import { ctxOf, uniq, type HasCtx } from "./context";
import { createUser, type CreatedUser, type CreateUserOptions } from "./users";

export type ShopRow = typeof schema.shop.$inferSelect;

/** Invented shop names for tests and the demo (no real businesses). */
const SHOP_NAMES = ["Cinderwick Auto Works", "Harrowvale Motor Bay", "Tollbright Service Garage", "Quillby Lane Repairs", "Emberlow Street Motors"];

/** Inserts a shop (the tenant). */
export async function createShop(on: HasCtx, opts: { name?: string; id?: string } = {}): Promise<ShopRow> {
  const ctx = ctxOf(on);
  const row: ShopRow = {
    id: opts.id ?? crypto.randomUUID(),
    name: opts.name ?? `${SHOP_NAMES[Math.floor(Math.random() * SHOP_NAMES.length)]} ${uniq()}`,
    stripeCustomerId: null,
    createdAt: ctx.now(),
  };
  ctx.db.insert(schema.shop).values(row).run();
  return row;
}

export interface ShopTeam {
  shop: ShopRow;
  owner: CreatedUser;
  technicians: CreatedUser[];
}

/** A shop with its owner and `technicians` technicians (default 1), all verified. */
export async function createShopTeam(
  on: HasCtx,
  opts: { name?: string; technicians?: number; owner?: CreateUserOptions; technician?: CreateUserOptions } = {},
): Promise<ShopTeam> {
  const shop = await createShop(on, { name: opts.name });
  const owner = await createUser(on, { ...opts.owner, role: "owner", shopId: shop.id });
  const technicians: CreatedUser[] = [];
  for (let i = 0; i < (opts.technicians ?? 1); i++) {
    technicians.push(await createUser(on, { ...opts.technician, role: "technician", shopId: shop.id }));
  }
  return { shop, owner, technicians };
}

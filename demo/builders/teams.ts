import { createShop, type ShopRow } from "./shops";
import type { HasCtx } from "./context";
import { createUser, type CreatedUser, type CreateUserOptions } from "./users";

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

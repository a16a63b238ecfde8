import { count } from "drizzle-orm";
import type { AppContext } from "../server/context";
import { schema } from "../server/db/client";
import { createShop } from "../tests/factories/shops";
import { createAdmin, createUser } from "../tests/factories/users";
import { createExpert } from "../tests/factories/experts";
import { DEMO_PASSWORD, DEMO_SIGN_INS } from "./sign-ins";

export { DEMO_PASSWORD, DEMO_SIGN_INS };

/** Invented shop and people for the demo; no real businesses or persons. */
export const DEMO_SHOP_NAME = "Copperfield Auto Works";

/**
 * Seeds the demo when the database has no users yet: one shop with its owner and a technician,
 * an approved ignition expert and a desk admin, all verified, all with DEMO_PASSWORD.
 * Returns true when it seeded, false when data was already there.
 */
export async function seedDemoIfEmpty(ctx: AppContext): Promise<boolean> {
  const n = ctx.db.select({ n: count() }).from(schema.user).get()?.n ?? 0;
  if (n > 0) return false;
  const shop = await createShop(ctx, { name: DEMO_SHOP_NAME });
  await createUser(ctx, { role: "technician", shopId: shop.id, email: "tech@burnline.test", name: "Dana Whitlock", password: DEMO_PASSWORD, color: "#2f8f83" });
  await createUser(ctx, { role: "owner", shopId: shop.id, email: "owner@burnline.test", name: "Ravi Castellan", password: DEMO_PASSWORD, color: "#d4831f" });
  await createExpert(ctx, {
    email: "expert@burnline.test",
    name: "Mira Okonkwo-Hale",
    password: DEMO_PASSWORD,
    color: "#7a5cc2",
    systems: ["ignition", "sensors"],
    makes: ["Veltra", "Korrin", "Astaro"],
    bio: "Eighteen years on secondary ignition, coil-on-plug diagnosis and scope work for independent shops.",
    yearsExperience: 18,
    status: "approved",
    available: true,
  });
  await createAdmin(ctx, { email: "admin@burnline.test", name: "Desk Admin", password: DEMO_PASSWORD });
  return true;
}

import { schema } from "../../server/db/client";
import { hashPassword } from "../../server/auth/password";
import type { Role } from "../../shared/domain/case-status";
import { ctxOf, uniq, type HasCtx } from "./context";
import { createShop } from "./shops";

/** The password every factory user gets unless told otherwise (8–128 chars, not on the common list). */
export const FACTORY_PASSWORD = "Plateau-burn-4417";

export interface CreateUserOptions {
  email?: string;
  name?: string;
  password?: string;
  role?: Role;
  /** technicians and owners: their shop; omitted → a new shop is created for them */
  shopId?: string | null;
  /** default true: factory users can sign in at once */
  emailVerified?: boolean;
  color?: string | null;
}

export interface CreatedUser {
  id: string;
  email: string;
  name: string;
  role: Role;
  shopId: string | null;
  /** the plain password, for signIn */
  password: string;
}

const hashCache = new Map<string, Promise<string>>();
/** argon2id is deliberately slow; tests reuse one hash per distinct password. */
function cachedHash(password: string): Promise<string> {
  let h = hashCache.get(password);
  if (!h) {
    h = hashPassword(password);
    hashCache.set(password, h);
  }
  return h;
}

const FIRST = ["Alex", "Sam", "Robin", "Jordan", "Casey", "Morgan", "Taylor", "Jamie", "Riley", "Quinn"];
const LAST = ["Marsh", "Okafor", "Lindqvist", "Barros", "Tanaka", "Novak", "Haddad", "Keane", "Moreau", "Petrov"];

/**
 * Inserts a user the way better-auth stores one (user row + "credential" account with the argon2id
 * hash), verified by default. Technicians and owners without a shopId get a fresh shop.
 */
export async function createUser(on: HasCtx, opts: CreateUserOptions = {}): Promise<CreatedUser> {
  const ctx = ctxOf(on);
  const role: Role = opts.role ?? "technician";
  let shopId = opts.shopId ?? null;
  if ((role === "technician" || role === "owner") && opts.shopId === undefined) {
    shopId = (await createShop(ctx)).id;
  }
  if (role === "expert" || role === "admin") shopId = null;
  const id = crypto.randomUUID();
  const u = uniq();
  const email = (opts.email ?? `${role}-${u}@example.test`).toLowerCase();
  const name =
    opts.name ?? `${FIRST[Math.floor(Math.random() * FIRST.length)]} ${LAST[Math.floor(Math.random() * LAST.length)]}`;
  const password = opts.password ?? FACTORY_PASSWORD;
  const hash = await cachedHash(password);
  const now = ctx.now();
  await ctx.db.write(async (tx) => {
    await tx
      .insert(schema.user)
      .values({
        id,
        name,
        email,
        emailVerified: opts.emailVerified ?? true,
        role,
        shopId,
        color: opts.color ?? null,
        createdAt: now,
        updatedAt: now,
      })
      .run();
    await tx
      .insert(schema.account)
      .values({
        id: crypto.randomUUID(),
        accountId: id,
        providerId: "credential",
        userId: id,
        password: hash,
        createdAt: now,
        updatedAt: now,
      })
      .run();
  });
  return { id, email, name, role, shopId, password };
}

/** A desk admin (admins exist only through the seed and this factory). */
export function createAdmin(on: HasCtx, opts: Omit<CreateUserOptions, "role" | "shopId"> = {}): Promise<CreatedUser> {
  return createUser(on, { ...opts, role: "admin", shopId: null });
}

import type { Request } from "express";
import { fromNodeHeaders } from "better-auth/node";
import type { Auth } from "./auth";
import type { Role } from "../../shared/domain/case-status";
import { unauthorized, forbidden } from "../http/errors";

/** The signed-in user as every policy sees them. */
export interface Actor {
  id: string;
  email: string;
  name: string;
  role: Role;
  shopId: string | null;
}

export async function getActor(req: Request, auth: Auth): Promise<Actor | null> {
  const cached = (req as any)._actor as Actor | null | undefined;
  if (cached !== undefined) return cached;
  const s = await auth.api.getSession({ headers: fromNodeHeaders(req.headers) });
  const u = s?.user as (typeof s extends null ? never : any) | undefined;
  const actor: Actor | null = u
    ? { id: u.id, email: u.email, name: u.name, role: (u.role ?? "technician") as Role, shopId: u.shopId ?? null }
    : null;
  (req as any)._actor = actor;
  return actor;
}

export async function requireActor(req: Request, auth: Auth, roles?: readonly Role[]): Promise<Actor> {
  const actor = await getActor(req, auth);
  if (!actor) throw unauthorized();
  if (roles && !roles.includes(actor.role)) throw forbidden();
  return actor;
}

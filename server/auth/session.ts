import type { Request } from "express";
import { fromNodeHeaders } from "better-auth/node";
import type { Auth } from "./auth";
import type { Role } from "../../shared/domain/case-status";
import { roles } from "../../shared/domain/case-status";
import { unauthorized, forbidden } from "../http/errors";

/** The signed-in user as every policy sees them. */
export interface Actor {
  id: string;
  email: string;
  name: string;
  role: Role;
  /** the tenant of technicians and owners; null for experts and admins */
  shopId: string | null;
}

const ACTOR = Symbol("actor");

/**
 * The stored role if it is one the policies know, else null. An unknown value (a typo in a manual
 * edit, a role from a newer version) grants nothing: the account is treated as signed out rather
 * than given a role it never had.
 */
export function knownRole(value: unknown): Role | null {
  return typeof value === "string" && (roles as readonly string[]).includes(value) ? (value as Role) : null;
}

/** Resolves the actor from a session cookie (or any header bag, e.g. a socket handshake's). */
export async function actorFromHeaders(headers: Request["headers"] | Headers, auth: Auth): Promise<Actor | null> {
  const s = await auth.api.getSession({ headers: headers instanceof Headers ? headers : fromNodeHeaders(headers) });
  const u = s?.user as Record<string, unknown> | undefined;
  if (!u || u.deactivatedAt) return null;
  const role = knownRole(u.role);
  if (!role) return null;
  return {
    id: String(u.id),
    email: String(u.email),
    name: String(u.name),
    role,
    shopId: role === "technician" || role === "owner" ? ((u.shopId as string | null | undefined) ?? null) : null,
  };
}

/** The signed-in user of this request, or null. Cached on the request. */
export async function getActor(req: Request, auth: Auth): Promise<Actor | null> {
  const r = req as Request & { [ACTOR]?: Actor | null };
  if (r[ACTOR] !== undefined) return r[ACTOR];
  const actor = await actorFromHeaders(req.headers, auth);
  r[ACTOR] = actor;
  return actor;
}

/** 401 when signed out; 403 when `roles` is given and the actor's role is not among them. */
export async function requireActor(req: Request, auth: Auth, allowed?: readonly Role[]): Promise<Actor> {
  const actor = await getActor(req, auth);
  if (!actor) throw unauthorized();
  if (allowed && !allowed.includes(actor.role)) throw forbidden();
  return actor;
}

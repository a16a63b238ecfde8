import type { Request } from "express";
import type { z } from "zod";
import { badRequest } from "./errors";

export interface FieldIssue {
  path: string;
  message: string;
}

export function zodIssues(error: z.ZodError): FieldIssue[] {
  return error.issues.map((i) => ({ path: i.path.map(String).join("."), message: i.message }));
}

/** Parses a value with a shared zod schema; a violation is a 400 listing each field. */
export function parseWith<S extends z.ZodType>(schema: S, value: unknown, where = "body"): z.output<S> {
  const r = schema.safeParse(value);
  if (!r.success) {
    const fields = zodIssues(r.error);
    const first = fields[0];
    const msg = first ? `${first.path ? first.path + ": " : ""}${first.message}` : "invalid input";
    throw badRequest("validation_failed", `Check the ${where}: ${msg}`, { fields });
  }
  return r.data;
}

export const parseBody = <S extends z.ZodType>(schema: S, req: Request) =>
  parseWith(schema, req.body ?? {}, "request body");
export const parseQuery = <S extends z.ZodType>(schema: S, req: Request) => parseWith(schema, req.query, "query");
export const parseParams = <S extends z.ZodType>(schema: S, req: Request) => parseWith(schema, req.params, "address");

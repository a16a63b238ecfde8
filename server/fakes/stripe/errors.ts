/**
 * Errors in Stripe's wire shape: `{ error: { type, code, message, param?, decline_code?, doc_url } }`
 * with the HTTP status that stripe-node maps to its error classes (Error.js, generateV1Error:
 * 400/404 → StripeInvalidRequestError or StripeIdempotencyError, 401 → StripeAuthenticationError,
 * 402 → StripeCardError).
 */
import type { FormObject, FormValue } from "./form";

export type StripeErrorType = "invalid_request_error" | "card_error" | "idempotency_error" | "api_error";

export interface StripeErrorBody {
  type: StripeErrorType;
  code?: string;
  message: string;
  param?: string;
  decline_code?: string;
  doc_url?: string;
  charge?: string;
  payment_intent?: unknown;
  payment_method?: unknown;
}

export class FakeStripeError extends Error {
  constructor(
    public readonly status: number,
    public readonly body: StripeErrorBody,
  ) {
    super(body.message);
  }
}

function docUrl(code: string | undefined): string | undefined {
  return code ? `https://stripe.com/docs/error-codes/${code.replace(/_/g, "-")}` : undefined;
}

export function invalidRequest(message: string, code?: string, param?: string, status = 400): FakeStripeError {
  return new FakeStripeError(status, {
    type: "invalid_request_error",
    ...(code ? { code, doc_url: docUrl(code) } : {}),
    message,
    ...(param ? { param } : {}),
  });
}

export function resourceMissing(kind: string, id: string, param = "id"): FakeStripeError {
  return invalidRequest(`No such ${kind}: '${id}'`, "resource_missing", param, 404);
}

export function missingParam(param: string): FakeStripeError {
  return invalidRequest(`Missing required param: ${param}.`, "parameter_missing", param);
}

export function unexpectedState(message: string): FakeStripeError {
  return invalidRequest(message, "payment_intent_unexpected_state");
}

// ---------------------------------------------------------------------------------------------
// Parameter access helpers. Every endpoint lists the parameters it accepts; anything else is
// refused the way Stripe does ("Received unknown parameter: x", code parameter_unknown), so a
// typo in the app fails loudly against the fake instead of silently against the real service.

export function rejectUnknown(params: FormObject, allowed: readonly string[], prefix = ""): void {
  for (const key of Object.keys(params)) {
    if (!allowed.includes(key)) {
      const name = prefix ? `${prefix}[${key}]` : key;
      throw invalidRequest(`Received unknown parameter: ${name}`, "parameter_unknown", name);
    }
  }
}

export function str(
  params: FormObject,
  key: string,
  opts: { required?: boolean; param?: string } = {},
): string | undefined {
  const v = params[key];
  const name = opts.param ?? key;
  if (v === undefined || v === "") {
    if (opts.required) throw missingParam(name);
    return undefined;
  }
  if (typeof v !== "string") throw invalidRequest(`Invalid string: ${name}`, "parameter_invalid_string", name);
  return v;
}

export function int(
  params: FormObject,
  key: string,
  opts: { required?: boolean; min?: number; param?: string } = {},
): number | undefined {
  const name = opts.param ?? key;
  const raw = str(params, key, { required: opts.required, param: name });
  if (raw === undefined) return undefined;
  if (!/^-?\d+$/.test(raw)) throw invalidRequest(`Invalid integer: ${raw}`, "parameter_invalid_integer", name);
  const n = Number(raw);
  if (!Number.isSafeInteger(n)) throw invalidRequest(`Invalid integer: ${raw}`, "parameter_invalid_integer", name);
  if (opts.min !== undefined && n < opts.min) {
    throw invalidRequest(`This value must be greater than or equal to ${opts.min}.`, "parameter_invalid_integer", name);
  }
  return n;
}

export function bool(params: FormObject, key: string): boolean | undefined {
  const raw = str(params, key);
  if (raw === undefined) return undefined;
  if (raw === "true") return true;
  if (raw === "false") return false;
  throw invalidRequest(`Invalid boolean: ${raw}`, "parameter_invalid_boolean", key);
}

export function oneOf<T extends string>(
  params: FormObject,
  key: string,
  values: readonly T[],
  param?: string,
): T | undefined {
  const raw = str(params, key, { param });
  if (raw === undefined) return undefined;
  if (!(values as readonly string[]).includes(raw)) {
    const name = param ?? key;
    throw invalidRequest(`Invalid ${name}: must be one of ${values.join(", ")}`, "parameter_invalid_string", name);
  }
  return raw as T;
}

export function obj(params: FormObject, key: string, param?: string): FormObject | undefined {
  const v = params[key];
  if (v === undefined || v === "") return undefined;
  if (typeof v === "string" || Array.isArray(v)) {
    const name = param ?? key;
    throw invalidRequest(`Invalid object: ${name}`, "parameter_invalid_object", name);
  }
  return v;
}

export function arr(params: FormObject, key: string): FormValue[] | undefined {
  const v = params[key];
  if (v === undefined || v === "") return undefined;
  if (Array.isArray(v)) return v;
  if (typeof v === "string") return [v];
  throw invalidRequest(`Invalid array: ${key}`, "parameter_invalid_array", key);
}

/** Stripe metadata: up to 50 string keys (≤ 40 chars) with string values (≤ 500 chars). */
export function metadata(params: FormObject, key = "metadata", prefix?: string): Record<string, string> | undefined {
  const name = prefix ? `${prefix}[${key}]` : key;
  const v = params[key];
  if (v === undefined) return undefined;
  if (v === "") return {};
  if (typeof v === "string" || Array.isArray(v))
    throw invalidRequest(`Invalid object: ${name}`, "parameter_invalid_object", name);
  const out: Record<string, string> = {};
  const keys = Object.keys(v);
  if (keys.length > 50) throw invalidRequest("Metadata can have at most 50 keys.", "parameter_invalid_object", name);
  for (const k of keys) {
    const val = v[k];
    if (typeof val !== "string")
      throw invalidRequest(`Invalid string: ${name}[${k}]`, "parameter_invalid_string", `${name}[${k}]`);
    if (k.length > 40)
      throw invalidRequest("Metadata keys can be at most 40 characters.", "parameter_invalid_string", `${name}[${k}]`);
    if (val.length > 500)
      throw invalidRequest(
        "Metadata values can be at most 500 characters.",
        "parameter_invalid_string",
        `${name}[${k}]`,
      );
    if (val !== "") out[k] = val;
  }
  return out;
}

export function currency(
  params: FormObject,
  key = "currency",
  opts: { required?: boolean; param?: string } = { required: true },
): string | undefined {
  const raw = str(params, key, opts);
  if (raw === undefined) return undefined;
  const c = raw.toLowerCase();
  if (!/^[a-z]{3}$/.test(c))
    throw invalidRequest(`Invalid currency: ${raw}.`, "parameter_invalid_string", opts.param ?? key);
  return c;
}

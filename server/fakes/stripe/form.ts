/**
 * Decoding of Stripe's form-encoded request bodies and query strings.
 *
 * The stripe-node SDK (node_modules/stripe/esm/utils.js, stringifyRequestData) sends nested
 * parameters in bracket notation: `metadata[case_id]=7`, `line_items[0][price_data][currency]=usd`,
 * `expand[0]=latest_charge`. Brackets may arrive encoded (%5B/%5D) or not; URLSearchParams decodes
 * both. A value of null is sent as an empty string (which Stripe treats as "unset").
 */

export type FormValue = string | FormObject | FormValue[];
export interface FormObject {
  [key: string]: FormValue;
}

/** Split `a[b][0][c]` into ["a", "b", "0", "c"]. Returns null for malformed keys. */
function splitKey(key: string): string[] | null {
  const first = key.indexOf("[");
  if (first === -1) return [key];
  const parts = [key.slice(0, first)];
  const rest = key.slice(first);
  const re = /\[([^[\]]*)\]/g;
  let consumed = 0;
  let m: RegExpExecArray | null;
  while ((m = re.exec(rest)) !== null) {
    if (m.index !== consumed) return null;
    parts.push(m[1]);
    consumed = m.index + m[0].length;
  }
  if (consumed !== rest.length || parts[0] === "") return null;
  return parts;
}

export class FormDecodeError extends Error {
  constructor(public readonly param: string) {
    super(`Invalid parameter name: ${param}`);
  }
}

/**
 * Decode a form body into nested objects/arrays. Objects whose keys are all dense integers
 * starting at 0 become arrays (the SDK's indexed-array format); `expand[]=x` also becomes an array.
 */
export function decodeForm(body: string): FormObject {
  const root: FormObject = {};
  const params = new URLSearchParams(body);
  for (const [rawKey, value] of params) {
    const parts = splitKey(rawKey);
    if (!parts) throw new FormDecodeError(rawKey);
    let node: FormObject = root;
    for (let i = 0; i < parts.length; i++) {
      let part = parts[i];
      const last = i === parts.length - 1;
      if (part === "") {
        // `expand[]=a&expand[]=b` style: append with the next free index.
        part = String(Object.keys(node).length);
      }
      if (part === "__proto__" || part === "constructor" || part === "prototype") {
        throw new FormDecodeError(rawKey);
      }
      if (last) {
        node[part] = value;
      } else {
        const existing = node[part];
        if (existing === undefined || typeof existing === "string") {
          const child: FormObject = {};
          node[part] = child;
          node = child;
        } else {
          node = existing as FormObject;
        }
      }
    }
  }
  return arrayify(root) as FormObject;
}

function arrayify(value: FormValue): FormValue {
  if (typeof value === "string" || Array.isArray(value)) return value;
  const keys = Object.keys(value);
  for (const k of keys) value[k] = arrayify(value[k]);
  const isDenseIndex =
    keys.length > 0 &&
    keys.every((k) => /^\d+$/.test(k)) &&
    keys
      .map(Number)
      .sort((a, b) => a - b)
      .every((n, i) => n === i);
  if (isDenseIndex) {
    return keys
      .map(Number)
      .sort((a, b) => a - b)
      .map((n) => value[String(n)]);
  }
  return value;
}

/** A stable string for comparing the parameters of two requests (idempotency checks). */
export function canonicalParams(value: unknown): string {
  if (value === null || typeof value !== "object") return JSON.stringify(value);
  if (Array.isArray(value)) return `[${value.map(canonicalParams).join(",")}]`;
  const obj = value as Record<string, unknown>;
  return `{${Object.keys(obj)
    .sort()
    .map((k) => `${JSON.stringify(k)}:${canonicalParams(obj[k])}`)
    .join(",")}}`;
}

/**
 * Money in integer minor units ("cents"). No floating-point arithmetic on amounts.
 * Pure, browser-safe.
 */

/** Throws TypeError unless `cents` is a safe integer (and ≥ 0 when `nonNegative`). */
export function assertCents(cents: number, name = "amount", nonNegative = false): void {
  if (typeof cents !== "number" || !Number.isSafeInteger(cents)) {
    throw new TypeError(`${name} must be a whole number of cents, got ${String(cents)}.`);
  }
  if (nonNegative && cents < 0) throw new RangeError(`${name} must not be negative, got ${cents}.`);
}

export function isCents(value: unknown): value is number {
  return typeof value === "number" && Number.isSafeInteger(value);
}

/**
 * Split a total between the desk and the expert. `deskShareBasisPoints` is the desk's share in
 * hundredths of a percent (2000 = 20 %), an integer 0–10000.
 *
 * Rounding: the desk's share is rounded DOWN to a whole cent; the expert receives the rest, so
 * deskCents + expertCents === totalCents always and any odd fraction of a cent goes to the expert.
 */
export function splitCents(
  totalCents: number,
  deskShareBasisPoints: number,
): { deskCents: number; expertCents: number } {
  assertCents(totalCents, "totalCents", true);
  if (!Number.isInteger(deskShareBasisPoints) || deskShareBasisPoints < 0 || deskShareBasisPoints > 10000) {
    throw new RangeError(`deskShareBasisPoints must be an integer 0–10000, got ${String(deskShareBasisPoints)}.`);
  }
  // BigInt keeps the product exact for any safe-integer total.
  const desk = Number((BigInt(totalCents) * BigInt(deskShareBasisPoints)) / 10000n);
  return { deskCents: desk, expertCents: totalCents - desk };
}

/**
 * The split of the part of a total between two running amounts (e.g. a refund taking the refunded
 * total from `fromCents` to `toCents`), computed as split(to) − split(from), so that however a total
 * is taken in pieces the pieces' shares add up to the share of the whole — no cent drifts.
 */
export function splitBetween(
  fromCents: number,
  toCents: number,
  deskShareBasisPoints: number,
): { deskCents: number; expertCents: number } {
  if (toCents < fromCents) throw new RangeError(`toCents (${toCents}) must not be below fromCents (${fromCents}).`);
  const a = splitCents(fromCents, deskShareBasisPoints);
  const b = splitCents(toCents, deskShareBasisPoints);
  return { deskCents: b.deskCents - a.deskCents, expertCents: b.expertCents - a.expertCents };
}

/** Sum of amounts in cents, checked. */
export function sumCents(amounts: readonly number[]): number {
  let total = 0;
  for (const a of amounts) {
    assertCents(a);
    total += a;
  }
  assertCents(total, "sum");
  return total;
}

/** Minor-unit digits of a currency (2 for USD/EUR, 0 for JPY), as Intl knows it. */
export function currencyDigits(currency: string): number {
  return new Intl.NumberFormat("en-US", { style: "currency", currency }).resolvedOptions().maximumFractionDigits ?? 2;
}

/**
 * Format an amount in minor units for people: formatCents(123456) → "$1,234.56".
 * The amount is split into whole units and minor units with integer arithmetic before formatting.
 */
export function formatCents(cents: number, currency = "USD", locale = "en-US"): string {
  assertCents(cents);
  const digits = currencyDigits(currency);
  const fmt = new Intl.NumberFormat(locale, {
    style: "currency",
    currency,
    minimumFractionDigits: digits,
    maximumFractionDigits: digits,
  });
  if (digits === 0) return fmt.format(cents);
  const scale = 10 ** digits;
  const sign = cents < 0 ? "-" : "";
  const abs = Math.abs(cents);
  const units = Math.trunc(abs / scale);
  const minor = abs % scale;
  // Intl accepts exact decimal strings; this avoids float artefacts for large amounts.
  const decimal = `${sign}${units}.${String(minor).padStart(digits, "0")}`;
  return fmt.format(decimal as unknown as number);
}

/**
 * Parse a decimal amount typed by a person into cents: "12", "12.5", "$1,234.56", "-3.10",
 * "1,000,000". A comma is accepted only as a thousands separator between groups of three digits
 * ("1,234"); anything else with a comma ("12,50", "1,2,3", ",123") is ambiguous or malformed and
 * refused, as are more than two decimals, letters, spaces inside the number and empty input.
 * Returns null when refused.
 */
export function parseCents(text: string): number | null {
  const t = String(text ?? "").trim();
  const m =
    /^(-)?\s*\$?\s*([1-9]\d{0,2}(?:,\d{3})+|\d+)(?:\.(\d{1,2}))?$/.exec(t) ??
    /^\$\s*(-)\s*([1-9]\d{0,2}(?:,\d{3})+|\d+)(?:\.(\d{1,2}))?$/.exec(t);
  if (!m) return null;
  const units = Number(m[2].replace(/,/g, ""));
  const cents = units * 100 + Number((m[3] ?? "").padEnd(2, "0"));
  if (!Number.isSafeInteger(units) || !Number.isSafeInteger(cents)) return null;
  return m[1] ? -cents : cents;
}

/**
 * The tax inside a tax-inclusive price: total × rate / (1 + rate), with the rate in basis points,
 * rounded half up to a whole cent (exact integer arithmetic). 4900 cents at 750 bp (7.5 %) → 342.
 */
export function includedTaxCents(totalCents: number, taxBasisPoints: number): number {
  assertCents(totalCents, "totalCents", true);
  if (!Number.isInteger(taxBasisPoints) || taxBasisPoints < 0 || taxBasisPoints > 10000) {
    throw new RangeError(`taxBasisPoints must be an integer 0–10000, got ${String(taxBasisPoints)}.`);
  }
  const num = BigInt(totalCents) * BigInt(taxBasisPoints);
  const den = BigInt(10000 + taxBasisPoints);
  return Number((2n * num + den) / (2n * den));
}

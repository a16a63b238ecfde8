/**
 * Test-card rules of the fake. The numbers are Stripe's published test cards
 * (docs.stripe.com/testing): 4242 4242 4242 4242 succeeds, 4000 0000 0000 0002 is a generic
 * decline, 4000 0000 0000 9995 declines for insufficient funds, 4000 0000 0000 0069 is an expired
 * card, 4000 0000 0000 0127 fails the CVC check, 5555 5555 5555 4444 (behind pm_card_mastercard)
 * succeeds. Only these are accepted: any other number that passes the Luhn check is refused with
 * card_declined before a payment method or a charge exists, so a real card typed by mistake is
 * never approved nor recorded. A number failing the Luhn check (ISO/IEC 7812-1 check digit) is
 * refused as incorrect.
 *
 * The fake keeps no card numbers: a payment method holds brand and last 4 digits, which identify
 * its test card (see testCardNumber), as Stripe's own objects do.
 */

export interface TestCard {
  number: string;
  brand: string;
  /** what happens when it is used, as shown on the checkout page */
  outcome: string;
}

export const TEST_CARDS: readonly TestCard[] = [
  { number: "4242424242424242", brand: "visa", outcome: "approved" },
  { number: "5555555555554444", brand: "mastercard", outcome: "approved" },
  { number: "4000000000000002", brand: "visa", outcome: "declined" },
  { number: "4000000000009995", brand: "visa", outcome: "declined, insufficient funds" },
  { number: "4000000000000069", brand: "visa", outcome: "declined, expired card" },
  { number: "4000000000000127", brand: "visa", outcome: "declined, incorrect CVC" },
];

/** The refusal of a number that is not one of TEST_CARDS. */
export const NOT_A_TEST_CARD = {
  code: "card_declined",
  message: "Your card was declined. This is a test checkout. Use one of the test cards listed on this page.",
} as const;

/** The full test-card number behind a stored brand + last 4, or undefined. */
export function testCardNumber(brand: string, last4: string): string | undefined {
  return TEST_CARDS.find((c) => c.brand === brand && c.number.endsWith(last4))?.number;
}

/** "4242 4242 4242 4242" */
export function groupedCardNumber(digits: string): string {
  return digits.replace(/(\d{4})(?=\d)/g, "$1 ");
}

export type CardOutcome =
  { ok: true } | { ok: false; code: string; declineCode?: string; message: string; declined: boolean };

export interface CardInput {
  number: string;
  expMonth: number;
  expYear: number;
  cvc: string;
}

/** Luhn (mod 10) check digit test, ISO/IEC 7812-1 Annex B. */
export function luhnValid(digits: string): boolean {
  if (!/^\d+$/.test(digits)) return false;
  let sum = 0;
  let double = false;
  for (let i = digits.length - 1; i >= 0; i--) {
    let d = digits.charCodeAt(i) - 48;
    if (double) {
      d *= 2;
      if (d > 9) d -= 9;
    }
    sum += d;
    double = !double;
  }
  return sum % 10 === 0;
}

export function normaliseCardNumber(input: string): string {
  return input.replace(/[\s-]/g, "");
}

export function cardBrand(digits: string): string {
  if (/^4/.test(digits)) return "visa";
  if (/^(5[1-5]|2(2[2-9]|[3-6]\d|7[01]|720))/.test(digits)) return "mastercard";
  if (/^3[47]/.test(digits)) return "amex";
  if (/^(6011|65|64[4-9])/.test(digits)) return "discover";
  return "unknown";
}

const DECLINES: Record<string, { code: string; declineCode?: string; message: string }> = {
  "4000000000000002": { code: "card_declined", declineCode: "generic_decline", message: "Your card was declined." },
  "4000000000009995": {
    code: "card_declined",
    declineCode: "insufficient_funds",
    message: "Your card has insufficient funds.",
  },
  "4000000000000069": { code: "expired_card", declineCode: "expired_card", message: "Your card has expired." },
  "4000000000000127": {
    code: "incorrect_cvc",
    declineCode: "incorrect_cvc",
    message: "Your card's security code is incorrect.",
  },
};

/** Stripe's test PaymentMethod tokens usable with `payment_method=` on PaymentIntent confirm. */
export const TEST_PAYMENT_METHOD_TOKENS: Record<string, string> = {
  pm_card_visa: "4242424242424242",
  pm_card_mastercard: "5555555555554444",
  pm_card_chargeDeclined: "4000000000000002",
  pm_card_chargeDeclinedInsufficientFunds: "4000000000009995",
  pm_card_chargeDeclinedExpiredCard: "4000000000000069",
  pm_card_chargeDeclinedIncorrectCvc: "4000000000000127",
};

/**
 * Check the card the way the hosted page does: format errors first (not a decline: no charge is
 * made), then the issuer's answer.
 */
export function evaluateCard(card: CardInput, nowSeconds: number): CardOutcome {
  const digits = normaliseCardNumber(card.number);
  if (!/^\d{12,19}$/.test(digits) || !luhnValid(digits)) {
    return { ok: false, code: "incorrect_number", message: "Your card number is incorrect.", declined: false };
  }
  if (!Number.isInteger(card.expMonth) || card.expMonth < 1 || card.expMonth > 12) {
    return {
      ok: false,
      code: "invalid_expiry_month",
      message: "Your card's expiration month is invalid.",
      declined: false,
    };
  }
  const now = new Date(nowSeconds * 1000);
  const year = card.expYear < 100 ? 2000 + card.expYear : card.expYear;
  const nowYear = now.getUTCFullYear();
  const nowMonth = now.getUTCMonth() + 1;
  if (
    !Number.isInteger(year) ||
    year < nowYear ||
    year > nowYear + 50 ||
    (year === nowYear && card.expMonth < nowMonth)
  ) {
    return {
      ok: false,
      code: "invalid_expiry_year",
      message: "Your card's expiration year is invalid.",
      declined: false,
    };
  }
  const cvcLength = cardBrand(digits) === "amex" ? 4 : 3;
  if (!new RegExp(`^\\d{${cvcLength}}$`).test(card.cvc)) {
    return { ok: false, code: "invalid_cvc", message: "Your card's security code is invalid.", declined: false };
  }
  if (!TEST_CARDS.some((c) => c.number === digits)) {
    // Refused before the "issuer": no payment method, no charge, nothing of the number is kept.
    return { ok: false, ...NOT_A_TEST_CARD, declined: false };
  }
  const decline = DECLINES[digits];
  if (decline) return { ok: false, ...decline, declined: true };
  return { ok: true };
}

/** Parse "MM / YY", "MM/YYYY", "MMYY". */
export function parseExpiry(input: string): { month: number; year: number } | null {
  const m = /^\s*(\d{1,2})\s*(?:\/|-|\s)?\s*(\d{2}|\d{4})\s*$/.exec(input);
  if (!m) return null;
  return { month: Number(m[1]), year: Number(m[2]) };
}

/**
 * The password strength rule, shared by the server (the decision) and the browser (live feedback
 * and the forms). Besides length and the common-password list (./common-passwords.ts) a new
 * password must reach score 3 of 4 in the zxcvbn estimate (Wheeler, "zxcvbn: Low-Budget Password
 * Strength Estimation", USENIX Security 2016: score 3 = more than 10^8 guesses, "safely
 * unguessable" against online attacks and moderate against an offline slow hash), computed with
 * the common-password and English dictionaries of @zxcvbn-ts plus this product's own words and the
 * person's own name, e-mail address and shop name.
 *
 * The estimator's dictionaries are large, so they are loaded apart (./password-estimator.ts):
 * statically on the server, by a dynamic import in the browser. Whoever loads them registers the
 * estimator here; until one is registered only the length and list rules apply (the server
 * registers it before it answers any request).
 */
import { isCommonPassword } from "./common-passwords";

export const PASSWORD_MIN_SCORE = 3;

/** Words of this product and its trade that make a password easy to guess for anyone who knows where it is used. */
export const PRODUCT_WORDS: readonly string[] = [
  "burnline",
  "burnline-demo",
  "burnlinedemo",
  "burn line",
  "demo",
  "ignition",
  "coil",
  "coilpack",
  "spark",
  "sparkplug",
  "plug",
  "waveform",
  "scope",
  "oscilloscope",
  "misfire",
  "injector",
  "sensor",
  "primary",
  "secondary",
  "firing",
  "firingline",
  "burntime",
  "kilovolt",
  "dwell",
  "cylinder",
  "crank",
  "crankshaft",
  "camshaft",
  "compression",
  "diagnostic",
  "diagnostics",
  "diagnosis",
  "garage",
  "mechanic",
  "technician",
  "workshop",
  "repair",
  "engine",
  "motor",
  "vehicle",
  "expert",
  "desk",
  "casebook",
  "trace",
  "capture",
  "second opinion",
  "secondopinion",
];

export interface PasswordEstimate {
  /** 0 (too guessable) … 4 (very unguessable) */
  score: 0 | 1 | 2 | 3 | 4;
  /** log10 of the estimated number of guesses */
  guessesLog10: number;
  /** why it is weak (empty when nothing specific) */
  warning: string;
  suggestions: string[];
  /** the dictionaries the weakest parts came from (e.g. "burnline", "userInputs", "passwords") */
  matchedDictionaries: string[];
  /** share of the password's characters (0–1) matched in each dictionary */
  coverage: Record<string, number>;
}

export type PasswordEstimator = (password: string, userInputs?: readonly string[]) => PasswordEstimate;

let registered: PasswordEstimator | null = null;

/** Registers the estimator (the server at start, the browser once the dictionaries have loaded). */
export function setPasswordEstimator(e: PasswordEstimator | null): void {
  registered = e;
}

export function passwordEstimatorLoaded(): boolean {
  return registered !== null;
}

/** The estimate, or null while no estimator is registered. */
export function estimatePassword(password: string, userInputs: readonly string[] = []): PasswordEstimate | null {
  return registered ? registered(password, userInputs) : null;
}

const MESSAGE = {
  blank: "Use at least 8 characters other than spaces.",
  common: "This is one of the most common passwords. Choose one that is harder to guess, e.g. a few unrelated words.",
  product:
    "It is built from Burnline's own name, the demo password or words of the trade, which anyone would try first.",
  personal: "It is built from your name, e-mail address or shop name, which anyone who knows you would try first.",
  weak: "This password is too easy to guess.",
  advice: "Add a few more unrelated words, or make it longer.",
} as const;

/**
 * Why `password` is refused, or null when it is acceptable. `userInputs` are the person's own
 * details (name, e-mail address, shop name). Length limits are the schema's; this checks what
 * the length allows.
 */
export function passwordProblem(password: string, userInputs: readonly string[] = []): string | null {
  if (password.trim().length < 8) return MESSAGE.blank;
  if (isCommonPassword(password)) return MESSAGE.common;
  const inputs = userInputs.flatMap(splitInput);
  const est = estimatePassword(password, inputs);
  if (!est) return null;
  // Mostly the person's own details or the product's words: refused below the top score, because
  // those are the first guesses of anyone who knows whose account it is or where it is used.
  if (est.score < 4 && (est.coverage.userInputs ?? 0) >= OWN_WORDS_SHARE)
    return `${MESSAGE.personal} ${MESSAGE.advice}`;
  if (est.score < 4 && (est.coverage.burnline ?? 0) >= OWN_WORDS_SHARE) return `${MESSAGE.product} ${MESSAGE.advice}`;
  if (est.score >= PASSWORD_MIN_SCORE) return null;
  return reasonFor(est);
}

/** Share of a password made of personal or product words above which it is refused unless it scores 4. */
export const OWN_WORDS_SHARE = 0.5;

function reasonFor(est: PasswordEstimate): string {
  if (est.matchedDictionaries.includes("userInputs")) return `${MESSAGE.personal} ${MESSAGE.advice}`;
  if (est.matchedDictionaries.includes("burnline")) return `${MESSAGE.product} ${MESSAGE.advice}`;
  const why = est.warning || MESSAGE.weak;
  const how = est.suggestions[0] ?? MESSAGE.advice;
  return `${why.replace(/\.?$/, ".")} ${how.replace(/\.?$/, ".")}`;
}

/** "Sam Ortega" → ["sam ortega", "samortega", "sam", "ortega"]; an e-mail address → its parts likewise. */
function splitInput(v: string): string[] {
  const s = v.trim().toLowerCase();
  if (!s) return [];
  const parts = s.split(/[^a-z0-9]+/).filter((p) => p.length >= 3);
  const compact = s.replace(/[^a-z0-9]+/g, "");
  return [s, compact, ...parts];
}

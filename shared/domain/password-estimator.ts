/**
 * The zxcvbn estimator (@zxcvbn-ts/core) with the common-password and English dictionaries and
 * this product's own words. Kept apart from ./password-strength.ts because the dictionaries weigh
 * megabytes: this module imports the packages only as types; the server imports them statically
 * and calls buildPasswordEstimator, the browser loads them with dynamic imports
 * (loadEstimatorLibraries: three chunks fetched in parallel, none with the first page).
 *
 * Two limits keep one estimate within tens of milliseconds (`npm run bench -- password`; with
 * the library's defaults a hostile 128-character input took seconds on a loaded 2-core machine):
 * only the first 40 characters are examined (the rest can only add strength), and at most 4 l33t
 * substitutions are tried (on a list of common l33t passwords — p@ssw0rd1, W3lc0m3!, Dr@g0n123,
 * F00tb@ll99, 1gn1t10n!! … — the scores were the same with 3, 5 and 10).
 */
import type { ZxcvbnFactory, ZxcvbnResult } from "@zxcvbn-ts/core";
import type * as Common from "@zxcvbn-ts/language-common";
import type * as En from "@zxcvbn-ts/language-en";
import { PRODUCT_WORDS, type PasswordEstimate, type PasswordEstimator } from "./password-strength";

export const ESTIMATED_LENGTH = 40;

export interface EstimatorLibraries {
  core: { ZxcvbnFactory: typeof ZxcvbnFactory };
  common: Pick<typeof Common, "dictionary" | "adjacencyGraphs">;
  en: Pick<typeof En, "dictionary" | "translations">;
}

/** The three packages by dynamic import (the browser's way). */
export async function loadEstimatorLibraries(): Promise<EstimatorLibraries> {
  const [core, common, en] = await Promise.all([
    import("@zxcvbn-ts/core"),
    import("@zxcvbn-ts/language-common"),
    import("@zxcvbn-ts/language-en"),
  ]);
  return { core, common, en };
}

export function buildPasswordEstimator({ core, common, en }: EstimatorLibraries): PasswordEstimator {
  const factory = new core.ZxcvbnFactory({
    dictionary: { ...common.dictionary, ...en.dictionary, burnline: [...PRODUCT_WORDS] },
    graphs: common.adjacencyGraphs,
    translations: en.translations,
    l33tMaxSubstitutions: 4,
    maxLength: ESTIMATED_LENGTH,
  });
  return (password, userInputs = []) => toEstimate(factory.check(password.slice(0, ESTIMATED_LENGTH), [...userInputs]));
}

function toEstimate(r: ZxcvbnResult): PasswordEstimate {
  const dictionaries = new Set<string>();
  const covered: Record<string, number> = {};
  for (const m of r.sequence) {
    const name = (m as { dictionaryName?: string }).dictionaryName;
    if (!name) continue;
    dictionaries.add(name);
    covered[name] = (covered[name] ?? 0) + m.token.length;
  }
  const length = Math.max(1, r.password.length);
  return {
    score: r.score as PasswordEstimate["score"],
    guessesLog10: r.guessesLog10,
    warning: r.feedback.warning ?? "",
    suggestions: r.feedback.suggestions ?? [],
    matchedDictionaries: [...dictionaries],
    coverage: Object.fromEntries(Object.entries(covered).map(([k, n]) => [k, n / length])),
  };
}

import { ENGINE_SAFETY, SECONDARY_SAFETY } from "../../../../shared/analysis/findings";
import type { Finding } from "../../../../shared/analysis/types";

/** Split the analysis's safety caution off an advice text, to show it as a caution of its own. */
function splitCaution(advice: string): { advice: string; caution: string | null } {
  for (const c of [SECONDARY_SAFETY, ENGINE_SAFETY]) {
    if (advice.includes(c)) return { advice: advice.replace(c, "").trim(), caution: c };
  }
  return { advice, caution: null };
}

/**
 * The findings with their advice split from the safety caution, the caution kept only beside the
 * first advice that carries it (the same caution once per trace, not once per finding).
 */
export function withCautionsOnce(findings: Finding[]): { f: Finding; advice: string; caution: string | null }[] {
  const seen = new Set<string>();
  return findings.map((f) => {
    const { advice, caution } = splitCaution(f.advice ?? "");
    const first = caution != null && !seen.has(caution);
    if (caution) seen.add(caution);
    return { f, advice, caution: first ? caution : null };
  });
}

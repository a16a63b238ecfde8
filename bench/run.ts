import fs from "node:fs";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import type { BenchResult } from "./types";

/**
 * `npm run bench [-- name-filter]`: runs every bench/*.bench.ts and prints its figures. Figures are
 * reported against baselines measured in the same run; goals are printed, never asserted in tests.
 */
const dir = path.dirname(fileURLToPath(import.meta.url));
const filter = process.argv[2];
const files = fs
  .readdirSync(dir)
  .filter((f) => f.endsWith(".bench.ts") && (!filter || f.includes(filter)))
  .sort();

const fmt = (n: number) => (Math.abs(n) >= 100 ? n.toFixed(0) : Math.abs(n) >= 1 ? n.toFixed(2) : n.toPrecision(3));
let allPass = true;
for (const f of files) {
  const mod = await import(pathToFileURL(path.join(dir, f)).href);
  console.log(`\n# ${f.replace(".bench.ts", "")}`);
  const results: BenchResult[] = await mod.default();
  for (const r of results) {
    const ratio = r.ratio != null ? `  ratio ${fmt(r.ratio)}${r.baseline ? ` vs ${r.baseline}` : ""}` : "";
    const goal = r.goal ? `  goal ${r.goal}${r.pass == null ? "" : r.pass ? " — met" : " — NOT met"}` : "";
    if (r.pass === false) allPass = false;
    console.log(`  ${r.name}: ${fmt(r.value)} ${r.unit}${ratio}${goal}`);
  }
}
console.log(`\n${allPass ? "all goals met" : "some goals not met"}`);
process.exit(0);

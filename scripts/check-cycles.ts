/**
 * Import cycles across server/, shared/, src/, demo/ and scripts/, counting every import: value and
 * type-only, static and dynamic (`import("…")`), and re-exports. ESLint's no-cycle rule skips
 * type-only imports; this check does not. Prints each cycle and exits 1 when there is one.
 *
 *   node --import tsx scripts/check-cycles.ts
 */
import { existsSync, readFileSync, readdirSync, statSync } from "node:fs";
import { dirname, join, relative, resolve } from "node:path";
import ts from "typescript";

const ROOT = resolve(import.meta.dirname, "..");
const FOLDERS = ["server", "shared", "src", "demo", "scripts"];
const EXTENSIONS = [".ts", ".tsx", ".mts", ".js", ".mjs"];

function walk(dir: string, out: string[]): string[] {
  for (const name of readdirSync(dir)) {
    if (name === "node_modules" || name === "migrations" || name.startsWith(".")) continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) walk(p, out);
    else if (EXTENSIONS.some((e) => name.endsWith(e)) && !name.endsWith(".d.ts")) out.push(p);
  }
  return out;
}

/** Resolves a relative specifier the way the bundler and tsx do; null for packages. */
function resolveSpecifier(from: string, spec: string): string | null {
  if (!spec.startsWith(".")) return null;
  const base = resolve(dirname(from), spec);
  const candidates = [base, ...EXTENSIONS.map((e) => base + e), ...EXTENSIONS.map((e) => join(base, `index${e}`))];
  if (/\.(m?js)$/.test(base)) candidates.push(base.replace(/\.m?js$/, ".ts"));
  for (const c of candidates) if (existsSync(c) && statSync(c).isFile()) return c;
  return null;
}

function importsOf(file: string): string[] {
  const info = ts.preProcessFile(readFileSync(file, "utf8"), true, true);
  const out = new Set<string>();
  for (const ref of info.importedFiles) {
    const target = resolveSpecifier(file, ref.fileName);
    if (target) out.add(target);
  }
  return [...out];
}

/** Strongly connected components with more than one file (or a file importing itself), by Tarjan. */
export function findCycles(graph: Map<string, string[]>): string[][] {
  let index = 0;
  const idx = new Map<string, number>();
  const low = new Map<string, number>();
  const onStack = new Set<string>();
  const stack: string[] = [];
  const cycles: string[][] = [];
  const visit = (v: string) => {
    idx.set(v, index);
    low.set(v, index);
    index += 1;
    stack.push(v);
    onStack.add(v);
    for (const w of graph.get(v) ?? []) {
      if (!idx.has(w)) {
        visit(w);
        low.set(v, Math.min(low.get(v)!, low.get(w)!));
      } else if (onStack.has(w)) low.set(v, Math.min(low.get(v)!, idx.get(w)!));
    }
    if (low.get(v) === idx.get(v)) {
      const scc: string[] = [];
      let w: string;
      do {
        w = stack.pop()!;
        onStack.delete(w);
        scc.push(w);
      } while (w !== v);
      if (scc.length > 1 || (graph.get(v) ?? []).includes(v)) cycles.push(scc.reverse());
    }
  };
  for (const v of graph.keys()) if (!idx.has(v)) visit(v);
  return cycles;
}

function main() {
  const files = FOLDERS.filter((f) => existsSync(join(ROOT, f))).flatMap((f) => walk(join(ROOT, f), []));
  const graph = new Map(files.map((f) => [f, importsOf(f)]));
  const cycles = findCycles(graph);
  for (const c of cycles) console.log(`import cycle: ${c.map((f) => relative(ROOT, f)).join(" → ")}`);
  if (cycles.length) process.exit(1);
  console.log(`no import cycles in ${files.length} files`);
}

if (process.argv[1] && resolve(process.argv[1]) === resolve(import.meta.filename)) main();

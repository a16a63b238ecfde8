/** Loading and saving the fake's state as a JSON file (so `npm start` survives a restart). */
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { dirname } from "node:path";
import { emptyState, type FakeStripeState } from "./types";

export function loadState(file: string | undefined): FakeStripeState {
  if (!file || !existsSync(file)) return emptyState();
  try {
    const parsed = JSON.parse(readFileSync(file, "utf8")) as FakeStripeState & { paymentMethodNumbers?: unknown };
    if (parsed.version !== 1) return emptyState();
    // Files written by earlier versions held full card numbers; they are not read back (and the
    // next save leaves them out).
    delete parsed.paymentMethodNumbers;
    return { ...emptyState(), ...parsed };
  } catch {
    return emptyState();
  }
}

export function saveState(file: string, state: FakeStripeState): void {
  mkdirSync(dirname(file), { recursive: true });
  const tmp = `${file}.${process.pid}.tmp`;
  writeFileSync(tmp, JSON.stringify(state));
  renameSync(tmp, file);
}

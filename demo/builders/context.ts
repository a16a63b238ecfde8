import type { AppContext } from "../../server/context";

/** Factories accept the AppContext itself or anything that carries one (a TestServer, a RunningServer). */
export type HasCtx = AppContext | { ctx: AppContext };

export function ctxOf(x: HasCtx): AppContext {
  return "ctx" in x ? x.ctx : x;
}

let counter = 0;
/** A short unique suffix for e-mail addresses and names within one process. */
export function uniq(): string {
  counter += 1;
  return `${Date.now().toString(36)}${counter.toString(36)}${Math.floor(Math.random() * 1296).toString(36)}`;
}

import { AsyncLocalStorage } from "node:async_hooks";
import type { RequestHandler } from "express";

/**
 * Work that must not delay an answer (sending mail, the slow half of a password-reset request)
 * is registered with `afterResponse(fn)` while a request is handled; it runs once the response
 * has been handed to the network (or the connection closed). Outside a request (socket handlers,
 * background sweeps) it runs on the next turn of the event loop.
 */
interface Scope {
  tasks: (() => void)[];
  done: boolean;
}

const storage = new AsyncLocalStorage<Scope>();

export const afterResponseScope: RequestHandler = (_req, res, next) => {
  const scope: Scope = { tasks: [], done: false };
  const flush = () => {
    if (scope.done) return;
    scope.done = true;
    for (const fn of scope.tasks.splice(0)) setImmediate(fn);
  };
  res.once("finish", flush);
  res.once("close", flush);
  storage.run(scope, next);
};

export function afterResponse(fn: () => void): void {
  const scope = storage.getStore();
  if (!scope || scope.done) {
    setImmediate(fn);
    return;
  }
  scope.tasks.push(fn);
}

/** True while a request's response is still being prepared (for tests of this module). */
export function inRequestScope(): boolean {
  const scope = storage.getStore();
  return !!scope && !scope.done;
}

// Entry of the casebook search pool's thread (piscina loads it by file name). The server runs its
// TypeScript through tsx; a worker thread does not always inherit that loader (e.g. under the test
// runner), so register it here (a second registration is harmless), then re-export the tasks.
const { register } = await import("tsx/esm/api");
register();
const tasks = await import("./casebook-search-worker.ts");

export const search = tasks.search;
export const warm = tasks.warm;
export const stats = tasks.stats;
export default tasks.search;

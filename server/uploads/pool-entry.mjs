// Entry of the upload pool's threads (piscina loads it by file name). The server runs its
// TypeScript through tsx; a worker thread does not always inherit that loader (e.g. under the test
// runner), so register it here (a second registration is harmless), then re-export the tasks.
const { register } = await import("tsx/esm/api");
register();
const tasks = await import("./pool-tasks.ts");

export const ingest = tasks.ingest;
export const follow = tasks.follow;
export const analyze = tasks.analyze;
export const ping = tasks.ping;
export default tasks.ingest;

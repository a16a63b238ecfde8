// Entry of the casebook search worker thread. The server runs its TypeScript through tsx; a worker
// thread does not always inherit that loader (e.g. under the test runner), so register it here
// (registering it a second time is harmless) and then load the worker module itself.
import { workerData } from "node:worker_threads";

const { register } = await import("tsx/esm/api");
register();
await import(workerData.entry);

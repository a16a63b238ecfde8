// Data builders of the demo seed, also used by the tests (tests/factories re-exports them). Each
// takes the AppContext or a server carrying one. Nothing here imports tests/.
export * from "./context";
export * from "./users";
export * from "./shops";
export * from "./teams";
export * from "./experts";
export * from "./casebook";
export * from "./prng";

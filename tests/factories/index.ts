// Test data factories, reused by demo/seed.ts. Each takes the AppContext or a server carrying one.
export * from "./context";
export * from "./users";
export * from "./shops";
export * from "./experts";
export * from "./sign-in";
export * from "./mail";
export * from "./casebook";

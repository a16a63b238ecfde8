// Test data factories: the data builders of the demo (demo/builders, so `npm start` runs no code
// from tests/) plus what only tests need (signing in through the real endpoint, caught mail).
export * from "../../demo/builders/index";
export * from "./sign-in";
export * from "./mail";

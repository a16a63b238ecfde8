// The seeded generator moved to demo/builders/prng.ts (the demo seed uses it too).
export * from "../../demo/builders/prng";

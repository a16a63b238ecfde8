// The synthetic casebook entries moved to demo/builders/casebook.ts (the demo seed uses them too).
export * from "../../demo/builders/casebook";

// The generator moved to demo/generators/ignition.ts (the demo seed uses it too; the demo never imports tests/).
export * from "../../demo/generators/ignition";

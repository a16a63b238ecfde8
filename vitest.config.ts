import { defineConfig } from "vitest/config";

export default defineConfig({
  test: {
    // component tests (React Testing Library) set `// @vitest-environment jsdom` per file
    include: ["tests/unit/**/*.test.ts", "tests/integration/**/*.test.ts", "tests/component/**/*.test.{ts,tsx}"],
    setupFiles: ["tests/helpers/setup.ts"],
    testTimeout: 30_000,
    hookTimeout: 30_000,
    pool: "forks",
    reporters: ["default", "json"],
    outputFile: { json: "test-results/unit.json" },
  },
});

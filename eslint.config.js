// ESLint flat config: TypeScript rules, React hooks and TanStack Query rules for the client, and the
// import boundaries of the code base (no cycles; shared/ imports neither side nor Node built-ins;
// client features never import each other; server/ never imports tests/ or demo/).
import { readdirSync } from "node:fs";
import js from "@eslint/js";
import tseslint from "typescript-eslint";
import reactHooks from "eslint-plugin-react-hooks";
import pluginQuery from "@tanstack/eslint-plugin-query";
import { importX } from "eslint-plugin-import-x";
import { createTypeScriptImportResolver } from "eslint-import-resolver-typescript";
import globals from "globals";

const features = readdirSync(new URL("./src/features", import.meta.url), { withFileTypes: true })
  .filter((d) => d.isDirectory())
  .map((d) => d.name);

/** One zone per feature: it may import only itself (and the app's shared client folders). */
const featureZones = features.map((name) => ({
  target: `./src/features/${name}`,
  from: "./src/features",
  except: [`./${name}`],
  message: "Client features never import each other; compose them in src/app.",
}));

export default tseslint.config(
  { ignores: ["dist/**", "node_modules/**", "data/**", "test-results/**", "coverage/**", "server/db/migrations/**"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node } },
    plugins: { "import-x": importX },
    settings: {
      "import-x/resolver-next": [
        createTypeScriptImportResolver({
          project: ["tsconfig.json", "src/tsconfig.json"],
          noWarnOnMultipleProjects: true,
        }),
      ],
      "import-x/parsers": { "@typescript-eslint/parser": [".ts", ".tsx"] },
      "import-x/extensions": [".ts", ".tsx", ".js", ".mjs"],
    },
    rules: {
      "import-x/no-cycle": ["error", { ignoreExternal: true }],
      "import-x/no-self-import": "error",
      "import-x/no-restricted-paths": [
        "error",
        {
          zones: [
            { target: "./shared", from: "./server", message: "shared/ imports neither side." },
            { target: "./shared", from: "./src", message: "shared/ imports neither side." },
            { target: "./shared", from: "./tests", message: "shared/ imports neither side." },
            { target: "./server", from: "./tests", message: "server/ never imports tests/." },
            { target: "./server", from: "./demo", message: "server/ never imports demo/." },
            {
              target: "./demo",
              from: "./tests",
              message: "The demo runs in production builds: it never imports tests/.",
            },
            { target: "./src", from: "./server", message: "The client talks to the server over HTTP only." },
            ...featureZones,
          ],
        },
      ],
      "@typescript-eslint/no-unused-vars": [
        "error",
        { argsIgnorePattern: "^_", varsIgnorePattern: "^_", caughtErrors: "none", ignoreRestSiblings: true },
      ],
      "@typescript-eslint/consistent-type-imports": ["error", { fixStyle: "inline-type-imports" }],
    },
  },
  {
    files: ["server/**/*.ts", "shared/**/*.ts", "src/**/*.{ts,tsx}"],
    rules: { "max-lines-per-function": ["error", { max: 150, IIFEs: true }] },
  },
  {
    files: ["shared/**/*.ts"],
    rules: {
      "import-x/no-nodejs-modules": ["error"],
    },
  },
  {
    files: ["src/**/*.{ts,tsx}"],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { "react-hooks": reactHooks, "@tanstack/query": pluginQuery },
    rules: {
      ...reactHooks.configs.recommended.rules,
      ...pluginQuery.configs.recommended.rules,
    },
  },
);

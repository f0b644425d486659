// One linter for the project: ESLint's recommended rules, typescript-eslint's
// recommended rules (no type information, so it stays fast) and the two React
// hooks rules. Kept modest on purpose: it catches mistakes, not style; the
// formatter's business is left to the code style guide.
import js from "@eslint/js";
import tseslint from "typescript-eslint";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";

export default tseslint.config(
  { ignores: ["node_modules/", "build/", ".react-router/", ".data/", "storage/", "test-results/", "playwright-report/", "tests/artifacts/", "bench/out/"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    linterOptions: { reportUnusedDisableDirectives: "error" },
    rules: {
      // `_name` marks a parameter or binding kept on purpose.
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_", caughtErrors: "none", ignoreRestSiblings: true }],
      // Query rows are loosely typed at the database edge (Knex returns any); the models narrow them.
      "@typescript-eslint/no-explicit-any": "off",
      // Stripping control characters from names and headers is deliberate where it appears.
      "no-control-regex": "off",
    },
  },
  {
    // The hot kernels declare their per-frame locals up front (see DEVELOPERS.md, "DSP hot loops").
    files: ["dsp/**/*.ts"],
    rules: { "no-useless-assignment": "off" },
  },
  {
    // Test fakes stand in for browser objects and may close over `this`.
    files: ["tests/**/*.ts", "**/*.test.ts"],
    rules: { "@typescript-eslint/no-this-alias": "off" },
  },
  {
    files: ["app/**/*.tsx", "app/**/*.ts"],
    plugins: { "react-hooks": reactHooks },
    rules: {
      "react-hooks/rules-of-hooks": "error",
      "react-hooks/exhaustive-deps": "error",
    },
  },
);

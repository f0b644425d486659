import { defineConfig } from "vitest/config";

// Kept apart from vite.config.ts so the React Router plugin does not load in tests.
export default defineConfig({
  test: {
    include: ["dsp/**/*.test.ts", "tests/unit/**/*.test.ts", "tests/server/**/*.test.ts"],
    environment: "node",
    pool: "forks",
    testTimeout: 60_000,
    hookTimeout: 120_000,
    // Server tests share one PostgreSQL database; files run one at a time there.
    fileParallelism: true,
  },
});

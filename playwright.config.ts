import { defineConfig } from "@playwright/test";

// Debian's chromium; Playwright never downloads a browser. The server is
// started by scripts/test.mjs (production build) and given as BASE_URL.
export default defineConfig({
  testDir: "tests/e2e",
  outputDir: "test-results",
  timeout: 120_000,
  retries: process.env.CI ? 1 : 0,
  workers: 1,
  reporter: [["list"]],
  use: {
    baseURL: process.env.BASE_URL ?? "http://127.0.0.1:3100",
    trace: "retain-on-failure",
    launchOptions: {
      executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
      args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
    },
  },
});

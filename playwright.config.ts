import { defineConfig } from "@playwright/test";

// Browser tests drive Debian's Chromium against the app that `npm test` started (RIMWATCH_TEST_URL).
export default defineConfig({
  testDir: "tests/e2e",
  outputDir: process.env.RW_RUN_DIR ? `${process.env.RW_RUN_DIR}/playwright` : "test-results",
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  expect: { timeout: 10_000 },
  use: {
    baseURL: process.env.RIMWATCH_TEST_URL ?? "http://127.0.0.1:3000",
    viewport: { width: 1280, height: 860 },
    screenshot: "only-on-failure",
    launchOptions: {
      executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
      args: ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
    },
  },
});

import { defineConfig } from "@playwright/test";

// Runs against the app that `npm test` started (APP_URL), in Debian's Chromium.
export default defineConfig({
  testDir: "tests/e2e",
  outputDir: "test-results/e2e-artifacts",
  fullyParallel: false,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  use: {
    baseURL: process.env.APP_URL ?? "http://127.0.0.1:3101",
    viewport: { width: 1180, height: 820 },
    hasTouch: true,
    trace: "retain-on-failure",
    launchOptions: {
      executablePath: "/usr/bin/chromium",
      args: [
        "--no-sandbox",
        "--headless",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        "--disable-quic",
      ],
    },
  },
});

import { defineConfig } from "@playwright/test";

const PORT = Number(process.env.RUNNEL_E2E_PORT ?? 3100);
const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";

/** Browser tests: the built app with a freshly seeded demo database, in Debian's Chromium (never a downloaded browser). */
export default defineConfig({
  testDir: "tests/browser",
  outputDir: "test-results/browser",
  timeout: 60_000,
  workers: 1,
  reporter: [["list"]],
  use: {
    baseURL: `http://127.0.0.1:${PORT}`,
    screenshot: "only-on-failure",
    trace: "off",
    launchOptions: {
      executablePath: CHROMIUM,
      args: [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
      ],
    },
  },
  webServer: {
    command: `node node_modules/tsx/dist/cli.mjs scripts/demo.ts --port ${PORT}`,
    url: `http://127.0.0.1:${PORT}/api/health`,
    timeout: 180_000,
    reuseExistingServer: false,
    stdout: "pipe",
    stderr: "pipe",
    env: { RUNNEL_DB: process.env.RUNNEL_E2E_DB ?? "test-results/e2e/runnel.db", NEXT_TELEMETRY_DISABLED: "1" },
  },
});

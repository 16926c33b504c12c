import { defineConfig } from "@playwright/test";

const port = Number(process.env.E2E_PORT ?? 5188);
const baseURL = `http://127.0.0.1:${port}`;

export default defineConfig({
  testDir: "tests/e2e",
  workers: 1,
  // One retry for a browser test that lost a race with a busy machine; the summary names it flaky.
  retries: 1,
  timeout: 60_000,
  outputDir: ".data/test-results/playwright-artifacts",
  use: {
    baseURL,
    screenshot: "only-on-failure",
    trace: "retain-on-failure",
    launchOptions: {
      // Debian's Chromium; Playwright never downloads a browser here.
      executablePath: "/usr/bin/chromium",
      args: ["--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE 127.0.0.1"],
    },
  },
  webServer: {
    command: "node --import tsx server/index.ts",
    url: `${baseURL}/api/health`,
    reuseExistingServer: false,
    // The server's own output (start-up steps, errors) shows in the test log as [WebServer] lines.
    stdout: "pipe",
    stderr: "pipe",
    // Compiling the server through tsx on a busy two-core machine has taken over a minute.
    timeout: 180_000,
    env: {
      NODE_ENV: "test",
      DATABASE_URL: process.env.TEST_DATABASE_URL ?? "",
      PORT: String(port),
      HOST: "127.0.0.1",
      CLIENT_DIR: "dist",
      MAIL_FAKE_PORT: "0",
      AUTH_SECRET: "end-to-end-tests-only-secret-0123456789abcdef",
    },
  },
});

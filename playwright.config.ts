import { execFileSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import path from "node:path";
import { defineConfig, devices } from "@playwright/test";

// One free port per run, chosen once in the main process and inherited by the workers.
function freePort(): number {
  const script = "const s=require('net').createServer().listen(0,'127.0.0.1',()=>{process.stdout.write(String(s.address().port));s.close()})";
  return Number(execFileSync(process.execPath, ["-e", script]).toString());
}
process.env.E2E_PORT ??= String(freePort());
process.env.E2E_SMTP_PORT ??= String(freePort());
process.env.E2E_OUTBOX_DIR ??= path.resolve(".data", `e2e-outbox-${process.env.E2E_PORT}`);
// The local outbox opens only with its secret (docs/decisions/013); specs open it through outboxPath().
process.env.E2E_OUTBOX_SECRET ??= randomBytes(24).toString("base64url");
const port = Number(process.env.E2E_PORT);
const baseURL = `http://localhost:${port}`;

export default defineConfig({
  testDir: "tests/e2e",
  outputDir: "test-results",
  fullyParallel: false,
  // Two workers: every spec makes its own organisation (or only reads the demo), and the page sweep
  // shares its team and its axe work between them through the run's output folder (tests/e2e/run-once.ts).
  workers: 2,
  retries: 0,
  timeout: 60_000,
  // An assertion waits up to 15 s (Playwright's default is 5): on a loaded two-core machine a
  // server action's answer once took longer than 5 s (load average 15). A passing check returns
  // as soon as it holds, so only a real failure waits the whole time.
  expect: { timeout: 15_000 },
  reporter: [["list"], ["html", { open: "never", outputFolder: "playwright-report" }]],
  use: {
    baseURL,
    trace: "retain-on-failure",
    screenshot: "only-on-failure",
    // Colours switch at once, so an axe check never reads a colour halfway through a transition.
    contextOptions: { reducedMotion: "reduce" },
    launchOptions: {
      executablePath: "/usr/bin/chromium",
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
    },
  },
  projects: [{ name: "chromium", use: { ...devices["Desktop Chrome"], viewport: { width: 1366, height: 860 } } }],
  webServer: [
    {
      command: `node --import tsx server/mail/fake-smtp-server.ts --port ${process.env.E2E_SMTP_PORT} --dir ${process.env.E2E_OUTBOX_DIR}`,
      port: Number(process.env.E2E_SMTP_PORT),
      reuseExistingServer: false,
    },
    {
      command: "node --import tsx server/http/main.ts",
      url: `${baseURL}/healthz`,
      reuseExistingServer: false,
      timeout: 60_000,
      env: {
        NODE_ENV: "production",
        PORT: String(port),
        // Links in e-mails and the same-origin guard use this origin, never the request's Host.
        APP_ORIGIN: baseURL,
        OUTBOX_SECRET: process.env.E2E_OUTBOX_SECRET!,
        SMTP_HOST: "127.0.0.1",
        SMTP_PORT: process.env.E2E_SMTP_PORT!,
        SALLYPORT_FAKE_SMTP: "1",
        MAIL_OUTBOX_DIR: process.env.E2E_OUTBOX_DIR!,
        // Every browser test signs up its own organisations (about 35 a run), all from 127.0.0.1.
        SIGN_UPS_PER_CLIENT: "200",
      },
    },
  ],
});

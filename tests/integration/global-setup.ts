import { spawn, type ChildProcess } from "node:child_process";
import { randomBytes } from "node:crypto";
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type { TestProject } from "vitest/node";
import { startFakeSmtp, type FakeSmtp } from "#server/mail/fake-smtp";
import { findFreePort } from "../support/free-port";

declare module "vitest" {
  export interface ProvidedContext {
    baseUrl: string;
    outboxDir: string;
    outboxSecret: string;
  }
}

let server: ChildProcess | undefined;
let smtp: FakeSmtp | undefined;

// Integration tests talk HTTP to the built app, as a browser would, against the real test
// database that `npm test` prepared; e-mail goes to a fake SMTP server writing to a folder.
export default async function setup(project: TestProject) {
  if (!process.env.DATABASE_URL) throw new Error("DATABASE_URL is not set: run the integration tests through `npm test`");
  const outboxDir = mkdtempSync(path.join(tmpdir(), "sallyport-outbox-"));
  smtp = await startFakeSmtp({ port: 0, directory: outboxDir });
  const port = await findFreePort();
  const baseUrl = `http://127.0.0.1:${port}`;
  const outboxSecret = randomBytes(24).toString("base64url");
  server = spawn(process.execPath, ["--import", "tsx", "server/http/main.ts"], {
    env: {
      ...process.env,
      // SALLYPORT_TEST_DEV=1 serves through Vite instead of build/, for quick runs while developing.
      NODE_ENV: process.env.SALLYPORT_TEST_DEV === "1" ? "development" : "production",
      SALLYPORT_HMR: "0",
      PORT: String(port),
      // The only origin of e-mailed links and of state-changing requests (docs/decisions/013).
      APP_ORIGIN: baseUrl,
      OUTBOX_SECRET: outboxSecret,
      // Tests pose as many clients through X-Forwarded-For, so per-address throttling in one test does not spill into others.
      TRUST_PROXY: "1",
      SMTP_HOST: "127.0.0.1",
      SMTP_PORT: String(smtp.port),
      SALLYPORT_FAKE_SMTP: "1",
      MAIL_OUTBOX_DIR: outboxDir,
      // Each response reports its query count; tests/integration/query-budget.test.ts reads it.
      SERVER_TIMING: "1",
    },
    stdio: ["ignore", "inherit", "inherit"],
  });
  const deadline = Date.now() + 90_000;
  for (;;) {
    try {
      const response = await fetch(`${baseUrl}/healthz`);
      if (response.ok) break;
    } catch {
      // not up yet
    }
    if (Date.now() > deadline) throw new Error("the app server did not answer /healthz within 90 s (is build/ present? run `npm run build`)");
    await new Promise((resolve) => setTimeout(resolve, 200));
  }
  project.provide("baseUrl", baseUrl);
  project.provide("outboxDir", outboxDir);
  project.provide("outboxSecret", outboxSecret);
  return async () => {
    server?.kill("SIGTERM");
    await smtp?.close();
  };
}

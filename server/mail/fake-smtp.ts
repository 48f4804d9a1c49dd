import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { createHash, randomBytes } from "node:crypto";
import { SMTPServer } from "smtp-server";

export type FakeSmtp = { port: number; close: () => Promise<void> };

/**
 * A loopback-only SMTP server that accepts every message and writes it to `directory` as an
 * .eml file, for the outbox page in development and for tests that read e-mailed links.
 */
export async function startFakeSmtp(options: { port: number; directory: string; host?: string }): Promise<FakeSmtp> {
  mkdirSync(options.directory, { recursive: true });
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    // Names the folder it writes to (hashed), so the set-up scripts reuse only their own server.
    banner: `Sallyport local fake SMTP for ${createHash("sha256").update(options.directory).digest("hex").slice(0, 12)}`,
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, _session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (chunk: Buffer) => chunks.push(chunk));
      stream.on("end", () => {
        const name = `${Date.now()}-${randomBytes(4).toString("hex")}.eml`;
        writeFileSync(path.join(options.directory, name), Buffer.concat(chunks));
        callback();
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, options.host ?? "127.0.0.1", () => resolve());
  });
  const address = server.server.address();
  const port = typeof address === "object" && address ? address.port : options.port;
  return { port, close: () => new Promise((resolve) => server.close(() => resolve())) };
}

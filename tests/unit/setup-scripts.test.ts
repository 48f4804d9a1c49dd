// Issue 14: `npm run stop` without the port variable could match another checkout's fake SMTP
// server by name. It now stops only the process its own pid file names, and only when that
// process is a fake SMTP server started from this checkout.
import { execFileSync, spawn, type ChildProcess } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterEach, describe, expect, test } from "vitest";

const root = path.resolve(import.meta.dirname, "../..");
const started: ChildProcess[] = [];

afterEach(() => {
  for (const child of started.splice(0)) if (child.exitCode === null) child.kill("SIGKILL");
});

function alive(child: ChildProcess): boolean {
  try {
    process.kill(child.pid!, 0);
    return child.exitCode === null && child.signalCode === null;
  } catch {
    return false;
  }
}

async function exited(child: ChildProcess, ms: number): Promise<boolean> {
  const deadline = Date.now() + ms;
  while (Date.now() < deadline) {
    if (!alive(child)) return true;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  return false;
}

/** Runs a function of server/setup/lib.sh with the data folder given. */
function libSh(dataDir: string, command: string): string {
  return execFileSync("bash", ["-c", `source server/setup/lib.sh && ${command}`], { cwd: root, env: { ...process.env, SALLYPORT_DATA_DIR: dataDir }, encoding: "utf8" });
}

describe("npm run stop ends only this checkout's fake SMTP server", () => {
  test("A server of another checkout with the same name and port on its command line survives; this checkout's stops", { timeout: 30_000 }, async () => {
    const dataDir = mkdtempSync(path.join(tmpdir(), "sallyport-stop-"));
    const elsewhere = mkdtempSync(path.join(tmpdir(), "sallyport-other-checkout-"));
    // Another checkout's server, as the old `pkill -f "fake-smtp-server.ts --port 2525 "` would have matched it.
    const other = spawn(process.execPath, ["-e", "setInterval(() => {}, 1000)", "server/mail/fake-smtp-server.ts", "--port", "2525", "--dir", elsewhere], { cwd: elsewhere, stdio: "ignore" });
    const ours = spawn(process.execPath, ["--import", "tsx", "server/mail/fake-smtp-server.ts", "--port", "0", "--dir", path.join(dataDir, "outbox")], { cwd: root, stdio: "ignore" });
    started.push(other, ours);
    await new Promise((resolve) => setTimeout(resolve, 500));
    const pidFile = libSh(dataDir, "fake_smtp_pid_file").trim();
    expect(path.dirname(pidFile)).toBe(dataDir);

    // A pid file naming someone else's process (stale, or another checkout's) stops nothing.
    writeFileSync(pidFile, String(other.pid));
    libSh(dataDir, "stop_fake_smtp");
    expect(alive(other)).toBe(true);

    writeFileSync(pidFile, String(ours.pid));
    libSh(dataDir, "stop_fake_smtp");
    expect(await exited(ours, 5_000)).toBe(true);
    expect(alive(other)).toBe(true);
  });
});

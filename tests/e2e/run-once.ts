import { createHash } from "node:crypto";
import { mkdirSync, openSync, closeSync, readFileSync, renameSync, writeFileSync, existsSync } from "node:fs";
import path from "node:path";

// Work shared by the workers of one Playwright run (workers: 2): a folder inside the run's output
// folder, which Playwright empties when a run starts, so nothing carries over between runs.

/** The run's shared folder for `name` (testInfo.project.outputDir is the same for every worker). */
export function sharedFolder(outputDir: string, name: string): string {
  const folder = path.join(outputDir, ".shared", name);
  mkdirSync(folder, { recursive: true });
  return folder;
}

/**
 * True for the first caller in the whole run to claim `key`, false for every later one (in any
 * worker): creating a file with the "wx" flag succeeds once.
 */
export function claimOnce(folder: string, key: string): boolean {
  const file = path.join(folder, createHash("sha256").update(key).digest("hex"));
  try {
    closeSync(openSync(file, "wx"));
    return true;
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === "EEXIST") return false;
    throw error;
  }
}

/**
 * The value `make` gives, made once per run: the worker that claims `name` first makes it and
 * writes it as JSON; the others wait for that file (or for the error the maker wrote).
 */
export async function makeOncePerRun<T>(folder: string, name: string, make: () => Promise<T>, waitMs = 300_000): Promise<T> {
  const done = path.join(folder, `${name}.json`);
  const failed = path.join(folder, `${name}.error`);
  if (claimOnce(folder, `make ${name}`)) {
    try {
      const value = await make();
      // Written under another name first, so a reader never sees half a file.
      writeFileSync(`${done}.partial`, JSON.stringify(value));
      renameSync(`${done}.partial`, done);
      return value;
    } catch (error) {
      writeFileSync(failed, String(error instanceof Error ? error.stack ?? error.message : error));
      throw error;
    }
  }
  const deadline = Date.now() + waitMs;
  while (Date.now() < deadline) {
    if (existsSync(done)) return JSON.parse(readFileSync(done, "utf8")) as T;
    if (existsSync(failed)) throw new Error(`another worker could not make ${name}: ${readFileSync(failed, "utf8").split("\n")[0]}`);
    await new Promise((resolve) => setTimeout(resolve, 250));
  }
  throw new Error(`${name} was not made by another worker within ${waitMs / 1000} s`);
}

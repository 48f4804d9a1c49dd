// The `sallyport` command line: validate, trace, reach, exposure, findings, diff, check.
// Exit codes: 0 ok, 1 a --fail-on… condition met, 2 usage or validation error (stderr).
// This entry holds only what --help needs; the commands (engine, model reader, formats) are
// imported when one is asked for, so the help answers without loading them.

import { once } from "node:events";
import { parseArgs } from "node:util";
import { OPTIONS, USAGE } from "./usage.ts";
import type { Io, Options } from "./usage.ts";

export type { Io } from "./usage.ts";

/** Runs the CLI; resolves to the exit code. */
export async function run(argv: readonly string[], io: Io): Promise<number> {
  let parsed: { values: Options; positionals: string[] };
  try {
    parsed = parseArgs({ args: [...argv], options: OPTIONS, allowPositionals: true, strict: true }) as { values: Options; positionals: string[] };
  } catch (e) {
    io.err(`sallyport: ${(e as Error).message}\n\n${USAGE}\n`);
    return 2;
  }
  const { values, positionals } = parsed;
  const [command, ...files] = positionals;
  if (values.help === true || command === undefined || command === "help") {
    const wait = io.out(`${USAGE}\n`);
    if (wait !== undefined) await wait;
    return command === undefined && values.help !== true ? 2 : 0;
  }
  const { runCommand } = await import("./commands.ts");
  return runCommand(command, files, values, io);
}

/**
 * Output the CLI may hand to standard output before the reader has taken it. A reader on
 * the other core takes each piece while the next is made, instead of the two taking turns
 * at every piece; bounded, so memory stays flat whatever the size of the output.
 */
const AHEAD_BYTES = 1 << 20;

/**
 * Entry point when run as a program. Output goes straight to the stream; when the stream
 * holds more than AHEAD_BYTES not yet taken by the reader (a pipe whose reader is slow),
 * writing waits for 'drain', so the process never buffers more than that.
 */
export function main(): void {
  const stdout = process.stdout;
  const io: Io = {
    out: (text) => {
      stdout.write(text);
      return stdout.writableLength < AHEAD_BYTES ? undefined : once(stdout, "drain").then(() => undefined);
    },
    err: (text) => {
      process.stderr.write(text);
    },
  };
  void run(process.argv.slice(2), io).then((code) => {
    process.exitCode = code;
  });
}

// Builds the `sallyport` CLI into one ESM file with esbuild (which tsx and Vite already
// bring), so a call starts without compiling TypeScript: `npm run build` and the
// `build_app` step of `npm start` / `npm test` run it. Packages (zod, luxon, csv-parse …)
// are bundled too: no module resolution at start-up. The entry (usage and options) is split
// from the commands' chunk, which it imports only for a command, so `--help` reads a few
// kilobytes instead of the whole engine.
//
//   node server/cli/build.mjs   → build/cli/sallyport.mjs, its chunks and build/cli/inputs.json
//
// inputs.json lists the project files the bundle was built from (and package-lock.json) and
// the chunks it loads; the launcher (server/cli/sallyport.mjs) runs the bundle only while no
// input is newer and every chunk is there.

import { mkdirSync, readdirSync, rmSync, writeFileSync } from "node:fs";
import { dirname, join, relative, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { build } from "esbuild";

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), "../..");

/**
 * Bundles server/cli/main.ts into `outdir`/sallyport.mjs (default build/cli) and writes the
 * list of its inputs beside it. Returns the bundle's absolute path.
 */
export async function buildCli(outdir = join(ROOT, "build/cli")) {
  const outfile = join(outdir, "sallyport.mjs");
  mkdirSync(outdir, { recursive: true });
  // Chunks of an earlier build carry other hashes: remove them so the folder holds one build.
  for (const name of readdirSync(outdir)) if (name.endsWith(".mjs")) rmSync(join(outdir, name));
  const result = await build({
    entryPoints: { sallyport: join(ROOT, "server/cli/main.ts") },
    outdir,
    outExtension: { ".js": ".mjs" },
    chunkNames: "[name]-[hash]",
    splitting: true,
    bundle: true,
    platform: "node",
    format: "esm",
    target: "node20",
    metafile: true,
    legalComments: "none",
    logLevel: "warning",
  });
  const inputs = Object.keys(result.metafile.inputs)
    .map((input) => relative(ROOT, resolve(process.cwd(), input)))
    .filter((input) => !input.split(/[\\/]/).includes("node_modules"));
  // Packages are stamped by the lock file that chose them.
  inputs.push("package-lock.json");
  const chunks = Object.keys(result.metafile.outputs)
    .map((output) => relative(outdir, resolve(process.cwd(), output)))
    .filter((output) => output !== "sallyport.mjs");
  writeFileSync(join(outdir, "inputs.json"), `${JSON.stringify({ bundle: "sallyport.mjs", chunks: chunks.sort(), inputs: inputs.sort() }, null, 2)}\n`);
  return outfile;
}

if (process.argv[1] !== undefined && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const started = performance.now();
  const outfile = await buildCli();
  process.stdout.write(`built ${relative(process.cwd(), outfile)} in ${Math.round(performance.now() - started)} ms\n`);
}

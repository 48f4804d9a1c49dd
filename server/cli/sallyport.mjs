#!/usr/bin/env node
// Launcher. Runs the bundled CLI (build/cli/sallyport.mjs, made by `npm run build`) while it
// is at least as new as every file it was built from; otherwise registers tsx and runs the
// TypeScript sources, so a fresh checkout works without a build and an edit is never
// answered by a stale bundle. SALLYPORT_CLI_FROM_SOURCE=1 always runs the sources.
import { freshBundle } from "./fresh-bundle.mjs";

const bundle = process.env.SALLYPORT_CLI_FROM_SOURCE === "1" ? null : freshBundle(new URL("../../", import.meta.url));
if (bundle !== null) {
  const { main } = await import(bundle.href);
  main();
} else {
  const { register } = await import("tsx/esm/api");
  register();
  const { main } = await import("./main.ts");
  main();
}

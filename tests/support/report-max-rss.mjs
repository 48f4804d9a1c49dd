// Preloaded into a CLI child process by a test (node --import): at exit it reports the
// process's peak resident set size on stderr, written synchronously so it is not lost.
import { writeSync } from "node:fs";

process.on("exit", () => {
  writeSync(2, `\nmax-rss-kib ${process.resourceUsage().maxRSS}\n`);
});

// Whether the CLI bundle can be trusted: it exists with every chunk it loads, its list of
// inputs exists, and no input has been changed (or removed) since it was built.
import { readFileSync, statSync } from "node:fs";

/**
 * The URL of root/build/cli/sallyport.mjs when it is at least as new as every input listed
 * in root/build/cli/inputs.json and each chunk listed there exists; null otherwise
 * (missing, unreadable or stale).
 * @param {URL} root the project folder, ending in "/"
 * @returns {URL | null}
 */
export function freshBundle(root) {
  try {
    const folder = new URL("build/cli/", root);
    const { bundle, chunks = [], inputs } = JSON.parse(readFileSync(new URL("inputs.json", folder), "utf8"));
    const file = new URL(bundle, folder);
    const built = statSync(file).mtimeMs;
    for (const chunk of chunks) statSync(new URL(chunk, folder));
    for (const input of inputs) {
      if (statSync(new URL(input, root)).mtimeMs > built) return null;
    }
    return file;
  } catch {
    return null;
  }
}

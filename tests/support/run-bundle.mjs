// Runs a CLI bundle given as the first argument with the remaining arguments, as the
// launcher would: `node tests/support/run-bundle.mjs BUNDLE exposure model.json --json`.
import { pathToFileURL } from "node:url";

const [bundle] = process.argv.splice(2, 1);
const { main } = await import(pathToFileURL(bundle).href);
main();

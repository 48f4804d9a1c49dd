// Rewrites the golden files from what the engine answers now. Run it only when a change of
// answers is intended, then review the diff (`git diff tests/engine/golden/`) before committing:
//   npx tsx tests/engine/golden/update.ts
// Golden files of models that no longer exist are removed.

import { readdirSync, statSync, unlinkSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { GOLDEN_DIR, goldenAnswers, goldenModels, goldenText } from "./answers.ts";

const models = goldenModels();
const wanted = new Set(models.map((model) => model.golden));
for (const model of models) {
  writeFileSync(join(GOLDEN_DIR, model.golden), goldenText(goldenAnswers(model)));
}
for (const name of readdirSync(GOLDEN_DIR)) {
  if (name.endsWith(".json") && !wanted.has(name)) {
    unlinkSync(join(GOLDEN_DIR, name));
    console.log(`removed ${name} (no such model any more)`);
  }
}
let total = 0;
for (const model of models) {
  const size = statSync(join(GOLDEN_DIR, model.golden)).size;
  total += size;
  console.log(`${model.golden.padEnd(36)} ${String(size).padStart(9)} bytes  ← ${model.file}`);
}
console.log(`${"total".padEnd(36)} ${String(total).padStart(9)} bytes`);

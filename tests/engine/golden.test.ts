// Golden outputs: what the engine answers today for every fixture model and demo device —
// findings, the exposure of every slice, reach from fixed sources, a few traces — all at fixed
// instants, compared with the JSON stored in tests/engine/golden/. A difference means an answer
// changed: if that is intended, run `npx tsx tests/engine/golden/update.ts` and review the diff
// (docs/engine.md, "Golden outputs"). These freeze behaviour; they do not judge it (the
// fixture, model and property tests do, with their sources).

import { readdirSync, readFileSync, statSync } from "node:fs";
import { join } from "node:path";
import { beforeAll, describe, expect, test } from "vitest";
import { GOLDEN_DIR, goldenAnswers, goldenModels, type GoldenAnswers } from "./golden/answers.ts";

const UPDATE = "an engine answer changed; if intended, run `npx tsx tests/engine/golden/update.ts` and review the diff";
const models = goldenModels();

test("every fixture model and demo device has a golden file, and every golden file a model", () => {
  expect(models.length).toBeGreaterThanOrEqual(11); // 5 fixtures and 6 demo devices when this was written
  const stored = readdirSync(GOLDEN_DIR).filter((name) => name.endsWith(".json")).sort();
  expect(stored).toEqual(models.map((model) => model.golden).sort());
});

test("the golden files stay small (under 4 MB together)", () => {
  // Our budget for the repository, no source: the largest map today is about 0.5 MB.
  const total = readdirSync(GOLDEN_DIR)
    .filter((name) => name.endsWith(".json"))
    .reduce((sum, name) => sum + statSync(join(GOLDEN_DIR, name)).size, 0);
  expect(total).toBeLessThan(4 * 1024 * 1024);
});

describe.each(models.map((model) => [model.file, model] as const))("%s", (_, model) => {
  let actual: GoldenAnswers;
  let stored: GoldenAnswers;
  beforeAll(() => {
    actual = goldenAnswers(model);
    stored = JSON.parse(readFileSync(join(GOLDEN_DIR, model.golden), "utf8")) as GoldenAnswers;
  });

  test("findings are unchanged", () => {
    expect(actual.findings, UPDATE).toEqual(stored.findings);
  });

  test("the exposure of every slice is unchanged", () => {
    expect(actual.exposure, UPDATE).toEqual(stored.exposure);
  });

  test("reach from the fixed sources is unchanged", () => {
    expect(actual.reach, UPDATE).toEqual(stored.reach);
  });

  test("the traces are unchanged", () => {
    expect(actual.traces, UPDATE).toEqual(stored.traces);
    expect(actual.model).toBe(stored.model);
  });
});

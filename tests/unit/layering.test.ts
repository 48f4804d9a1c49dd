// The layering rules in eslint.config.js (app → server → engine, models below server), run
// through ESLint's Node API on small code strings at made-up paths. The rules themselves are the
// project's own architecture (DEVELOPERS.md "Lint and layering"), so there is no outside source.

import { fileURLToPath } from "node:url";
import { ESLint } from "eslint";
import { describe, expect, test } from "vitest";

const root = fileURLToPath(new URL("../..", import.meta.url));
const eslint = new ESLint({ cwd: root, overrideConfigFile: fileURLToPath(new URL("../../eslint.config.js", import.meta.url)) });

/** A module at `filePath` that imports `name` from `specifier` and uses it. */
async function lintImport(filePath: string, specifier: string, name = "value") {
  const code = `import { ${name} } from "${specifier}";\n\nexport const used = ${name};\n`;
  const [result] = await eslint.lintText(code, { filePath });
  return result.messages;
}

async function lintCode(filePath: string, code: string) {
  const [result] = await eslint.lintText(code, { filePath });
  return result.messages;
}

/** The layer rules a lint run reported, as "rule: message" lines. */
const layering = (messages: readonly { ruleId: string | null; message: string }[]) =>
  messages.filter((entry) => entry.ruleId === "no-restricted-imports" || entry.ruleId === "no-restricted-syntax").map((entry) => `${entry.ruleId}: ${entry.message}`);

// The first lint of a run loads ESLint and its plugins: seconds on a loaded 2-core machine.
describe("Layering: app → server → engine, models below server", { timeout: 30_000 }, () => {
  test("A server module importing from app/ fails the lint step, by alias or by relative path", async () => {
    for (const specifier of ["#app/utils/x", "#app/utils/x.ts", "../../app/utils/x", "./../../app/utils/x"]) {
      const messages = await lintImport("server/services/example.server.ts", specifier);
      expect(layering(messages), specifier).toEqual([expect.stringContaining("server/ must not import from app/ (layering: app → server → engine)")]);
      expect(messages.every((entry) => entry.severity === 2)).toBe(true);
    }
    // Outside services too: the CLI, auth and the HTTP layer sit below app/ as well.
    expect(layering(await lintImport("server/http/example.server.ts", "../../app/routes/home"))).toHaveLength(1);
    expect(layering(await lintImport("server/config.server.ts", "../app/utils/x.ts"))).toHaveLength(1);
  });

  test("A server module reaching app/ through import() or typeof import() fails as well", async () => {
    const dynamic = await lintCode("server/auth/example.server.ts", 'export const load = () => import("#app/utils/x");\n');
    expect(layering(dynamic)).toEqual([expect.stringContaining("no-restricted-syntax: server/ must not import from app/")]);
    const typeOnly = await lintCode("server/auth/example.server.ts", 'export type Keys = typeof import("../../app/utils/x");\n');
    expect(layering(typeOnly)).toEqual([expect.stringContaining("server/ must not import from app/")]);
  });

  test("A model importing from server/ or app/ fails the lint step", async () => {
    expect(layering(await lintImport("models/example.ts", "#server/auth/roles.ts", "ROLES"))).toEqual([expect.stringContaining("models/ must not import from server/ (the engine excepted) (layering: models sit below server)")]);
    expect(layering(await lintImport("models/example.ts", "../server/auth/roles.ts", "ROLES"))).toEqual([expect.stringContaining("models/ must not import from server/")]);
    expect(layering(await lintImport("models/example.ts", "#app/utils/x"))).toEqual([expect.stringContaining("models/ must not import from app/")]);
    // The engine is the bottom layer: a model may name its types (a revision's document).
    expect(layering(await lintCode("models/example.ts", 'import type { DeviceModel } from "#server/engine/index.ts";\nexport type Stored = DeviceModel;\n'))).toEqual([]);
    expect(layering(await lintImport("models/example.ts", "#server/engineering/x.ts"))).toHaveLength(1);
  });

  test("A service or analysis module importing the CLI or the HTTP layer fails the lint step", async () => {
    expect(layering(await lintImport("server/services/example.server.ts", "#server/cli/csv.ts", "parseCsv"))).toEqual([expect.stringContaining("must not import server/cli/ (layering: services sit beside the CLI)")]);
    expect(layering(await lintImport("server/services/example.server.ts", "../cli/csv.ts", "parseCsv"))).toEqual([expect.stringContaining("must not import server/cli/")]);
    expect(layering(await lintImport("server/analysis/example.server.ts", "../http/schemas.ts"))).toEqual([expect.stringContaining("must not import server/http/ (layering: services sit below the HTTP layer)")]);
    // The rest of server/ stays open to them.
    expect(layering(await lintImport("server/services/example.server.ts", "../db/database.server.ts", "ensureDatabase"))).toEqual([]);
    expect(layering(await lintImport("server/services/example.server.ts", "#server/engine/index.ts", "parseModel"))).toEqual([]);
  });

  test("The engine importing a Node builtin, another package or the rest of server/ fails the lint step", async () => {
    const cases = [
      ["node:fs", "readFileSync"],
      ["fs", "readFileSync"],
      ["react", "useState"],
      ["#server/db/database.server.ts", "ensureDatabase"],
      ["#models/device.ts", "Device"],
      ["../db/database.server.ts", "ensureDatabase"],
      ["./../services/devices.server.ts", "findDevice"],
    ];
    for (const [specifier, name] of cases) {
      expect(layering(await lintImport("server/engine/example.ts", specifier, name)), specifier).toEqual([expect.stringContaining("server/engine/ may import only zod, luxon and its own files")]);
    }
    expect(layering(await lintImport("server/engine/testing/example.ts", "../../http/schemas.ts"))).toHaveLength(1);
    expect(layering(await lintCode("server/engine/example.ts", 'export const load = () => import("node:fs");\n'))).toHaveLength(1);
  });

  test("The engine importing zod, luxon or its own files passes the lint step", async () => {
    for (const [specifier, name] of [["zod", "z"], ["luxon", "DateTime"], ["./addresses.ts", "formatAddress"]]) {
      const messages = await lintImport("server/engine/example.ts", specifier, name);
      expect(messages, specifier).toEqual([]);
    }
    expect(await lintImport("server/engine/testing/example.ts", "../addresses.ts", "formatAddress")).toEqual([]);
  });

  test("A route module importing the engine passes the lint step (app sits above server)", async () => {
    expect(await lintImport("app/routes/example.tsx", "#server/engine/index.ts", "parseModel")).toEqual([]);
  });
});

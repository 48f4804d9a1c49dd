// The CLI's output path: JSON written piece by piece is byte for byte what one
// JSON.stringify(value, null, 2) gave before; writing waits whenever the reader asks it to;
// the bundle (build/cli) answers exactly as the TypeScript sources do; and the launcher runs
// the bundle only while it is at least as new as every file it was built from.

import { spawnSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, rmSync, utimesSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, test } from "vitest";
import { run } from "#server/cli/main.ts";
import type { Io } from "#server/cli/main.ts";
import { compileModel, diffModels, exposure, findings, parseModel, reach } from "#server/engine/index.ts";
import { generateModel } from "#server/engine/testing/generate-model.ts";
import { buildCli } from "#server/cli/build.mjs";
import { freshBundle } from "#server/cli/fresh-bundle.mjs";
import { CidrTextCache, withCidrBytes } from "#server/cli/exposure-json.ts";
import { jsonPieces, OWN_JSON } from "#server/formats/json-stream.ts";

const ROOT = join(import.meta.dirname, "../..");
const FIXTURES = join(ROOT, "tests/fixtures/models");
const AT = "2025-03-04T10:00:00Z";

const temp = mkdtempSync(join(tmpdir(), "sallyport-cli-"));
const generated = join(temp, "generated.json");
// 300 rules over four interfaces: an --at map of a few megabytes, many pieces.
const MODEL = generateModel(77, { interfaces: 4, rules: 300, addressObjects: 400, entries: 1600, groups: 20, accounts: 8, schedules: 4, spread: "wide", scheduledShare: 0.1, scheduleStyle: "office" }).model;
writeFileSync(generated, JSON.stringify(MODEL));

function compiledFile(path: string) {
  const parsed = parseModel(JSON.parse(readFileSync(path, "utf8")));
  if (!parsed.ok) throw new Error(`${path} is not a valid model`);
  return compileModel(parsed.model);
}

/** An Io whose reader is slow every few pieces; it counts writes made while it asked to wait. */
function slowIo(): { io: Io; text: () => string; early: () => number; waits: () => number } {
  const pieces: Buffer[] = [];
  let waiting = false;
  let early = 0;
  let waits = 0;
  const io: Io = {
    out(text) {
      if (waiting) early++;
      // Kept as handed over (a view, not a copy): a writer that filled a buffer again after handing it over would show here.
      pieces.push(typeof text === "string" ? Buffer.from(text, "utf8") : Buffer.from(text.buffer, text.byteOffset, text.byteLength));
      if (pieces.length % 3 !== 0) return undefined;
      waiting = true;
      waits++;
      return new Promise<void>((resolve) =>
        setTimeout(() => {
          waiting = false;
          resolve();
        }, 1),
      );
    },
    err() {},
  };
  return { io, text: () => Buffer.concat(pieces).toString("utf8"), early: () => early, waits: () => waits };
}

describe("JSON output, written as it is produced", { timeout: 60_000 }, () => {
  const device = compiledFile(generated);
  const before = join(FIXTURES, "kestrel-dental.json");
  const after = join(FIXTURES, "kestrel-dental-lockout.json");
  const pretty = (value: unknown): string => `${JSON.stringify(value, null, 2)}\n`;

  test.each([
    ["exposure --at", ["exposure", generated, "--at", AT, "--json"], () => pretty(exposure(device, AT))],
    ["reach", ["reach", generated, "--from", "10.1.2.3", "--at", AT, "--json"], () => pretty(reach(device, "10.1.2.3", AT))],
    ["findings", ["findings", generated, "--json"], () => pretty({ findings: findings(device) })],
    ["diff", ["diff", before, after, "--json"], () => pretty(diffModels(compiledFile(before), compiledFile(after)))],
    [
      "exposure, every slice (one compact slice per line)",
      ["exposure", generated, "--json"],
      () => {
        const slices = exposure(device).slices;
        return `{\n"slices": [\n${slices.map((s, i) => `${JSON.stringify(s)}${i + 1 < slices.length ? "," : ""}\n`).join("")}]\n}\n`;
      },
    ],
  ] as const)("%s: the same bytes as one JSON.stringify, and no write while the reader is behind", async (_, args, expected) => {
    const reader = slowIo();
    expect(await run(args, reader.io)).toBe(0);
    expect(reader.text()).toBe(expected());
    expect(reader.early()).toBe(0);
  });

  test("a large answer goes out in many pieces, each waited for", async () => {
    const reader = slowIo();
    await run(["exposure", generated, "--at", AT, "--json"], reader.io);
    expect(reader.text().length).toBeGreaterThan(1_000_000);
    expect(reader.waits()).toBeGreaterThan(5);
  });

  test("exit codes keep their meaning through the Io: 1 for --fail-on, 2 for usage", async () => {
    const reader = slowIo();
    expect(await run(["findings", join(FIXTURES, "kestrel-dental.json"), "--fail-on", "critical", "--json"], reader.io)).toBe(1);
    expect(JSON.parse(reader.text()).findings.length).toBeGreaterThan(0);
    expect(await run(["exposure"], slowIo().io)).toBe(2);
  });
});

describe("the bundled CLI", () => {
  test("answers byte for byte as the TypeScript sources do", { timeout: 60_000 }, async () => {
    const bundle = await buildCli(join(temp, "bundle"));
    const cases = [
      ["--help"],
      ["exposure", generated, "--at", AT, "--json"],
      ["exposure", join(FIXTURES, "kestrel-dental.json")],
      ["findings", join(FIXTURES, "kestrel-dental.json"), "--fail-on", "high"],
      ["diff", join(FIXTURES, "kestrel-dental.json"), join(FIXTURES, "kestrel-dental-lockout.json"), "--fail-on-lockout", "--json"],
      ["trace", join(FIXTURES, "harbourline-edge.json"), "--from", "198.51.100.20", "--on", "outside", "--service", "https", "--at", "2025-03-04T10:00"],
      ["validate", join(FIXTURES, "harbourline-edge.json"), "--json"],
      ["frobnicate"],
    ];
    for (const args of cases) {
      const fromBundle = spawnSync(process.execPath, [join(ROOT, "tests/support/run-bundle.mjs"), bundle, ...args], { cwd: ROOT, encoding: "utf8", maxBuffer: 1 << 28 });
      // The sources run here, through the `run` that the bundle's `main` wraps: a child process
      // through tsx compiled them again for every case (about half a minute of the test, and
      // over its minute at a load average of 10); the next test runs the launcher on the sources once.
      const out: Buffer[] = [];
      const err: string[] = [];
      const status = await run(args, {
        out: (text) => {
          out.push(typeof text === "string" ? Buffer.from(text, "utf8") : Buffer.from(text));
          return undefined;
        },
        err: (text) => {
          err.push(text);
        },
      });
      expect([fromBundle.status, fromBundle.stdout, fromBundle.stderr], args.join(" ")).toEqual([status, Buffer.concat(out).toString("utf8"), err.join("")]);
    }
  });

  test("the launcher runs the TypeScript sources when told to, with the same answer", { timeout: 60_000 }, async () => {
    const args = ["validate", join(FIXTURES, "harbourline-edge.json"), "--json"];
    const fromSource = spawnSync(process.execPath, [join(ROOT, "server/cli/sallyport.mjs"), ...args], { cwd: ROOT, encoding: "utf8", env: { ...process.env, SALLYPORT_CLI_FROM_SOURCE: "1" } });
    const out: string[] = [];
    const status = await run(args, {
      out: (text) => {
        out.push(typeof text === "string" ? text : Buffer.from(text).toString("utf8"));
        return undefined;
      },
      err: () => {},
    });
    expect([fromSource.status, fromSource.stdout, fromSource.stderr]).toEqual([status, out.join(""), ""]);
  });

  test("the launcher trusts a bundle only while no input is newer, missing or unlisted", () => {
    const root = join(temp, "root");
    rmSync(root, { recursive: true, force: true });
    mkdirSync(join(root, "build/cli"), { recursive: true });
    mkdirSync(join(root, "server"), { recursive: true });
    const url = pathToFileURL(`${root}/`);
    const at = (path: string, seconds: number): void => utimesSync(join(root, path), seconds, seconds);
    expect(freshBundle(url)).toBeNull(); // nothing built
    writeFileSync(join(root, "server/a.ts"), "");
    writeFileSync(join(root, "build/cli/sallyport.mjs"), "");
    expect(freshBundle(url)).toBeNull(); // no list of inputs
    writeFileSync(join(root, "build/cli/inputs.json"), JSON.stringify({ bundle: "sallyport.mjs", inputs: ["server/a.ts"] }));
    at("server/a.ts", 1_000);
    at("build/cli/sallyport.mjs", 2_000);
    expect(freshBundle(url)?.href).toBe(pathToFileURL(join(root, "build/cli/sallyport.mjs")).href);
    at("server/a.ts", 3_000); // edited after the build
    expect(freshBundle(url)).toBeNull();
    at("server/a.ts", 1_000);
    rmSync(join(root, "server/a.ts")); // removed since
    expect(freshBundle(url)).toBeNull();
  });
});

describe("the exposure's CIDR lists written as bytes", () => {
  test("every entry the engine made takes the byte path (no silent fall-back to rendering strings), with the same JSON text", () => {
    const parsed = parseModel(MODEL);
    if (!parsed.ok) throw new Error("generated model invalid");
    const device = compileModel(parsed.model);
    const map = exposure(device, Date.parse(AT));
    const written = withCidrBytes(map, device, device.sliceAt(Date.parse(AT))) as { entries: { ranges: object }[] };
    expect(written.entries.length).toBe(map.entries.length);
    expect(written.entries.every((entry) => OWN_JSON in entry.ranges)).toBe(true);
    expect(Buffer.concat([...jsonPieces(written, { indent: 2 })]).toString("utf8")).toBe(JSON.stringify(map, null, 2));
  });

  test("range texts kept or not, shared between layouts and slices: the same text (a cache of no room, a few kilobytes, the default)", { timeout: 60_000 }, () => {
    const parsed = parseModel(MODEL);
    if (!parsed.ok) throw new Error("generated model invalid");
    const device = compileModel(parsed.model);
    const slices = exposure(device).slices.slice(0, 3);
    for (const cache of [new CidrTextCache(0), new CidrTextCache(4096), new CidrTextCache()]) {
      slices.forEach((slice, index) => {
        // Compact and indented in turn through one cache: each layout keeps its own texts.
        for (const indent of [0, 2]) {
          const text = Buffer.concat([...jsonPieces(withCidrBytes(slice, device, index, cache), { indent })]).toString("utf8");
          expect(text).toBe(JSON.stringify(slice, null, indent));
        }
      });
    }
  });

  test("an entry whose lists are not its partition's is written as it is", { timeout: 60_000 }, () => {
    const parsed = parseModel(MODEL);
    if (!parsed.ok) throw new Error("generated model invalid");
    const device = compileModel(parsed.model);
    const map = exposure(device, Date.parse(AT));
    // The entries in another order: each entry's lists belong to another cell's partition.
    const shuffled = { ...map, entries: [...map.entries].reverse() };
    const written = withCidrBytes(shuffled, device, device.sliceAt(Date.parse(AT))) as { entries: { ranges: object }[] };
    const distinct = new Set(map.entries.map((entry) => entry.ranges)).size;
    expect(distinct).toBeGreaterThan(1);
    expect(written.entries.some((entry) => !(OWN_JSON in entry.ranges))).toBe(true);
    expect(Buffer.concat([...jsonPieces(written, { indent: 2 })]).toString("utf8")).toBe(JSON.stringify(shuffled, null, 2));
  });
});

// The CLI at size: the all-slices exposure map of a generated 4,000-rule model (about half a
// gigabyte of JSON, more than fits in one V8 string's worth of headroom) piped through a
// child process. The test reads it as it arrives, a slice per line, and checks it is one
// complete, valid document whose counts add up; and that the child's peak memory stays far
// below the output's size, i.e. the CLI writes as it goes and waits for a slow reader.

import { spawn } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { createInterface } from "node:readline";
import { describe, expect, test } from "vitest";
import { compileModel, exposureSlices, OUTCOMES, parseModel } from "#server/engine/index.ts";
import type { ExposureSlice } from "#server/engine/index.ts";
import { generateModel } from "#server/engine/testing/generate-model.ts";

const ROOT = join(import.meta.dirname, "../..");
const BIN = join(ROOT, "server/cli/sallyport.mjs");
const REPORT_RSS = join(ROOT, "tests/support/report-max-rss.mjs");

// 10 interfaces, 4,000 rules, 3,000 address objects, 10 office-hour schedules: 59 slices.
const MODEL = generateModel(4000, {
  interfaces: 10,
  rules: 4000,
  addressObjects: 3000,
  entries: 12000,
  groups: 100,
  accounts: 20,
  schedules: 10,
  spread: "wide",
  scheduledShare: 0.05,
  scheduleStyle: "office",
}).model;

/** Peak memory the child may use; buffering the output instead would take more than the output itself. */
const MAX_RSS_MIB = 400;

/** RFC 4632 §3.1: a /n holds 2^(bits − n) addresses. */
function cidrSize(cidr: string): bigint {
  const bits = cidr.includes(":") ? 128 : 32;
  return 1n << BigInt(bits - Number(cidr.slice(cidr.indexOf("/") + 1)));
}

describe("sallyport exposure --json at size", () => {
  test("a 4,000-rule model's all-slices map streams out complete, valid and in bounded memory", { timeout: 120_000 }, async () => {
    const parsed = parseModel(MODEL);
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors.slice(0, 3)));
    const device = compileModel(parsed.model);
    const planned = device.week.slices;
    expect(parsed.model.inboundRules.length).toBeGreaterThanOrEqual(4000);
    // The first slice as the engine builds it in this process, to compare byte for byte.
    const [firstSlice] = exposureSlices(device);
    const firstLine = JSON.stringify(firstSlice);

    const dir = mkdtempSync(join(tmpdir(), "sallyport-stream-"));
    const file = join(dir, "model.json");
    writeFileSync(file, JSON.stringify(MODEL));
    const child = spawn(process.execPath, ["--import", REPORT_RSS, BIN, "exposure", file, "--json"], { cwd: ROOT, stdio: ["ignore", "pipe", "pipe"] });
    let stderr = "";
    child.stderr.setEncoding("utf8");
    child.stderr.on("data", (text: string) => {
      stderr += text;
    });
    const exited = new Promise<number | null>((resolve) => child.on("close", (code) => resolve(code)));

    let bytes = 0;
    child.stdout.on("data", (chunk: Buffer) => {
      bytes += chunk.length;
    });
    const lines = createInterface({ input: child.stdout, crlfDelay: Infinity });
    const frame: string[] = [];
    let slices = 0;
    let entries = 0;
    let cidrsChecked = 0;
    for await (const line of lines) {
      if (!line.startsWith("{\"start\"")) {
        frame.push(line);
        continue;
      }
      // One slice per line, followed by a comma except the last (one document: PRODUCT.md §3, docs/engine.md).
      const last = !line.endsWith(",");
      const text = last ? line : line.slice(0, -1);
      if (slices === 0) expect(text).toBe(firstLine);
      const slice = JSON.parse(text) as ExposureSlice;
      const want = planned[slices];
      expect([slice.startMinute, slice.endMinute]).toEqual([want.start, want.end]);
      expect(slice.entries.length).toBe(firstSlice.entries.length);
      slice.entries.forEach((entry, k) => {
        // Every outcome's count, summed, is the whole family of the destination (2^32 or 2^128).
        const family = entry.to.includes(":") ? 128n : 32n;
        const total = OUTCOMES.reduce((sum, o) => sum + BigInt(entry.counts[o]), 0n);
        expect(total).toBe(1n << family);
        // And each outcome's CIDR list covers exactly its count (checked on every 5th entry to keep the test short).
        if (k % 5 === 0) {
          for (const o of OUTCOMES) {
            let covered = 0n;
            for (const cidr of entry.ranges[o]) covered += cidrSize(cidr);
            cidrsChecked += entry.ranges[o].length;
            expect(covered).toBe(BigInt(entry.counts[o]));
          }
        }
      });
      entries += slice.entries.length;
      slices++;
      if (last) expect(slices).toBe(planned.length);
    }
    const code = await exited;
    expect(code).toBe(0);
    expect(frame).toEqual(["{", '"slices": [', "]", "}"]);
    expect(slices).toBe(planned.length);
    expect(entries).toBe(planned.length * firstSlice.entries.length);
    expect(cidrsChecked).toBeGreaterThan(1_000_000);

    const rss = /max-rss-kib (\d+)/.exec(stderr);
    expect(rss, stderr).not.toBeNull();
    const rssMiB = Number(rss?.[1]) / 1024;
    expect(bytes).toBeGreaterThan(500 * 1024 * 1024);
    expect(rssMiB).toBeLessThan(MAX_RSS_MIB);
    expect(rssMiB * 1024 * 1024).toBeLessThan(bytes / 1.25);
  });
});

// The reach and exposure map pages over HTTP, as a browser and a spreadsheet use them, checked
// against the engine run directly on the same demo model (seeders/devices/*.json).
// Semantics: PRODUCT.md §3; engine contracts: docs/engine.md.

import { readFileSync } from "node:fs";
import { beforeAll, describe, expect, test } from "vitest";
import { parseCsv } from "#server/formats/csv";
import { compileModel, exposure, OUTCOMES, parseModel, reach, trace } from "#server/engine/index";
import { isOutcome, LAYER_LABELS, OUTCOME_LABELS } from "#server/engine/vocabulary";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient } from "../support/client";
import { plain, UUID } from "../support/html";

const AT = "2025-03-04T10:00"; // a Tuesday morning on the device clock

function demoDevice(name: string) {
  const parsed = parseModel(JSON.parse(readFileSync(new URL(`../../seeders/devices/${name}.json`, import.meta.url), "utf8")));
  if (!parsed.ok) throw new Error(`demo model ${name} invalid`);
  return compileModel(parsed.model);
}

/** Text of an HTML page without React's text separators, entities decoded. */

/** The table rows of a page, as plain HTML fragments. */
function rowsOf(html: string): string[] {
  return plain(html).split("<tr").slice(1);
}

let engineer: TestClient;
let trainee: TestClient;
const deviceIds = new Map<string, string>();
const path = (name: string, rest: string) => `/o/lanternfield/devices/${deviceIds.get(name)}/${rest}`;

beforeAll(async () => {
  engineer = new TestClient();
  expect((await engineer.signIn(...DEMO_PASSWORDS.engineer)).status).toBe(302);
  trainee = new TestClient();
  expect((await trainee.signIn(...DEMO_PASSWORDS.trainee)).status).toBe(302);
  const fleet = await engineer.get("/o/lanternfield/devices");
  for (const match of fleet.text.matchAll(new RegExp(`href="/o/lanternfield/devices/(${UUID})"[^>]*>([^<]+)<`, "g"))) deviceIds.set(match[2], match[1]);
  for (const name of ["clf-gw-02", "clf-fw-01", "bwc-edge-v6"]) if (!deviceIds.has(name)) throw new Error(`demo device ${name} not on the fleet page`);
});

describe("Reach: what one source can reach", () => {
  test("An engineer asks what 203.0.113.50 reaches on clf-gw-02 and sees https on outside offering a password-only login, as the engine says", async () => {
    const response = await engineer.get(path("clf-gw-02", `reach?from=203.0.113.50&at=${AT}`));
    expect(response.status).toBe(200);
    // The engine on the same model, directly: seeders/devices/README.md documents this probe.
    const direct = trace(demoDevice("clf-gw-02"), { from: "203.0.113.50", interface: "outside", service: "https", at: AT });
    expect(direct.outcome).toBe("login-password");
    const row = rowsOf(response.text).find((html) => html.includes(">outside<") && html.includes(">https<"));
    expect(row).toBeDefined();
    expect(row).toContain(`(${direct.outcome})`);
    expect(row).toContain("Login with password only");
    expect(row).toContain(direct.layers[direct.layers.length - 1].detail); // the deciding layer's detail
    expect(row).toContain(direct.eligibleAccounts.join(", "));
    // The summary line counts outcomes over every interface × service.
    const all = reach(demoDevice("clf-gw-02"), "203.0.113.50", AT).results;
    const logins = all.filter((result) => result.outcome.startsWith("login-")).length;
    expect(plain(response.text)).toContain(`reaches ${logins} services with a login`);
  });

  test("The reach table sorts by a column through the URL", async () => {
    const response = await engineer.get(path("clf-gw-02", `reach?from=203.0.113.50&at=${AT}&sort=outcome&dir=desc`));
    expect(response.status).toBe(200);
    const outcomes = rowsOf(response.text)
      .map((html) => /\((silent|refused|answered|login-denied|login-mfa|login-password)\)/.exec(html)?.[1])
      .filter((outcome): outcome is (typeof OUTCOMES)[number] => outcome !== undefined)
      .map((outcome) => OUTCOMES.indexOf(outcome));
    expect(outcomes.length).toBeGreaterThan(1);
    expect(outcomes).toEqual([...outcomes].sort((a, b) => b - a));
    expect(response.text).toContain('aria-sort="descending"');
  });

  test("The reach CSV has a row per interface × catalogue service, quoted per RFC 4180, as an attachment", async () => {
    const response = await engineer.get(path("clf-gw-02", `reach.csv?from=203.0.113.50&at=${AT}`));
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toMatch(/^text\/csv/);
    expect(response.headers.get("content-disposition")).toMatch(/^attachment; filename=".+\.csv"$/);
    const [header, ...rows] = parseCsv(response.text);
    // Each code column is followed by its label column.
    expect(header).toEqual(["interface", "to", "service", "outcome", "outcome_label", "deciding_layer", "deciding_layer_label", "rule_id", "eligible_accounts", "detail", "sources", "source_count"]);
    const device = demoDevice("clf-gw-02");
    expect(rows).toHaveLength(device.model.interfaces.length * device.catalogue.length);
    const expected = reach(device, "203.0.113.50", AT).results;
    rows.forEach((row, index) => {
      const deciding = expected[index].layers[expected[index].layers.length - 1];
      expect(row[0]).toBe(expected[index].interface);
      expect(row[2]).toBe(expected[index].service);
      expect(row[3]).toBe(expected[index].outcome);
      expect(row[4]).toBe(OUTCOME_LABELS[expected[index].outcome]);
      expect(row[5]).toBe(deciding.layer);
      expect(row[6]).toBe(LAYER_LABELS[deciding.layer]);
      expect(row[7]).toBe(expected[index].ruleId ?? "");
      expect(row[9]).toBe(deciding.detail);
    });
    // A detail with quotes in it survives the round trip (RFC 4180 §2.7).
    expect(rows.some((row) => row[9].includes('"outside"'))).toBe(true);
  });

  test("The reach page and its CSV use one vocabulary: each CSV code's label is what the page shows in that row", async () => {
    const [page, csv] = await Promise.all([engineer.get(path("clf-gw-02", `reach?from=203.0.113.205&at=${AT}`)), engineer.get(path("clf-gw-02", `reach.csv?from=203.0.113.205&at=${AT}`))]);
    const pageRows = rowsOf(page.text);
    const rows = parseCsv(csv.text).slice(1);
    expect(new Set(rows.map((row) => row[3])).size).toBeGreaterThan(1); // several outcomes, so the check means something
    for (const [iface, , service, outcome, outcomeLabel, , layerLabel] of rows) {
      const shown = pageRows.find((html) => html.includes(`>${iface}<`) && html.includes(`>${service}<`));
      expect(shown, `${iface} ${service}`).toContain(`>${outcomeLabel}<`);
      expect(shown).toContain(`(${outcome})`);
      expect(shown).toContain(`>${layerLabel}<`);
    }
    // The silent outcome reads "No answer" on the page and in the CSV's label column, with the code beside it.
    expect(rows.some((row) => row[3] === "silent" && row[4] === OUTCOME_LABELS.silent)).toBe(true);
  });

  test("A blocked scanner's address shows the deciding rule", async () => {
    const response = await engineer.get(path("clf-gw-02", `reach.csv?from=203.0.113.205&at=${AT}`));
    const row = parseCsv(response.text).find((fields) => fields[0] === "outside" && fields[2] === "https");
    const direct = trace(demoDevice("clf-gw-02"), { from: "203.0.113.205", interface: "outside", service: "https", at: AT });
    expect(row?.[3]).toBe(direct.outcome);
    expect(row?.[7]).toBe(direct.ruleId);
    expect(direct.ruleId).toBe("block-noisy-scanners"); // seeders/devices/README.md
  });

  test("A malformed source address is refused inline with 400, the typed value kept; never a 500", async () => {
    const response = await engineer.get(path("clf-gw-02", "reach?from=203.0.113.999"));
    expect(response.status).toBe(400);
    const text = plain(response.text);
    expect(text).toContain('"203.0.113.999" is not an IPv4 address');
    expect(text).toContain('value="203.0.113.999"');
    for (const bad of ["10.0.0", "2001:db8::1::1", "x".repeat(5000), "", "%00"]) {
      const status = (await engineer.get(path("clf-gw-02", `reach?from=${encodeURIComponent(bad)}`))).status;
      expect(status, bad).toBe(400);
    }
    const badTime = await engineer.get(path("clf-gw-02", "reach?from=203.0.113.50&at=next-tuesday"));
    expect(badTime.status).toBe(400);
    expect(plain(badTime.text)).toContain('"next-tuesday" is not an ISO 8601 date-time');
    const csv = await engineer.get(path("clf-gw-02", "reach.csv?from=not-an-address"));
    expect(csv.status).toBe(400);
    expect(csv.text).toContain("not-an-address");
  });

  test("Without a source the page just shows the form", async () => {
    const response = await engineer.get(path("clf-gw-02", "reach"));
    expect(response.status).toBe(200);
    expect(plain(response.text)).toContain("Ask about one source");
  });
});

describe("Exposure map", () => {
  test("Exposure CSV counts of each entry sum to 2^32 or 2^128 and match the engine per outcome", async () => {
    for (const name of ["clf-gw-02", "bwc-edge-v6"]) {
      const response = await engineer.get(path(name, `exposure.csv?at=${AT}`));
      expect(response.status).toBe(200);
      expect(response.headers.get("content-disposition")).toMatch(/^attachment;/);
      const [header, ...rows] = parseCsv(response.text);
      expect(header).toEqual(["interface", "to", "service", "outcome", "outcome_label", "count", "cidr"]);
      const sums = new Map<string, bigint>();
      for (const [iface, to, service, outcome, label, count] of rows) {
        expect(isOutcome(outcome) ? OUTCOME_LABELS[outcome] : `not an outcome: ${outcome}`).toBe(label);
        const key = `${iface} ${to} ${service} ${outcome}`;
        sums.set(key, (sums.get(key) ?? 0n) + BigInt(count));
      }
      const direct = exposure(demoDevice(name), AT).entries;
      for (const entry of direct) {
        const total = OUTCOMES.reduce((sum, outcome) => sum + (sums.get(`${entry.interface} ${entry.to} ${entry.service} ${outcome}`) ?? 0n), 0n);
        // RFC 4632 §3.1 (2^32) and RFC 4291 (128-bit addresses, 2^128): the partition covers the family.
        expect(total, `${name} ${entry.interface} ${entry.to} ${entry.service}`).toBe(entry.to.includes(":") ? 2n ** 128n : 2n ** 32n);
        for (const outcome of OUTCOMES) expect(sums.get(`${entry.interface} ${entry.to} ${entry.service} ${outcome}`) ?? 0n).toBe(BigInt(entry.counts[outcome]));
      }
      expect(new Set(rows.map((row) => `${row[0]} ${row[1]} ${row[2]}`)).size).toBe(direct.length);
    }
  });

  test("Exposure CSV follows the page's filters", async () => {
    const response = await engineer.get(path("clf-gw-02", `exposure.csv?at=${AT}&interface=outside&service=https&outcome=login-password`));
    const rows = parseCsv(response.text).slice(1);
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.every((row) => row[0] === "outside" && row[2] === "https" && row[3] === "login-password")).toBe(true);
    const entry = exposure(demoDevice("clf-gw-02"), AT).entries.find((candidate) => candidate.interface === "outside" && candidate.service === "https")!;
    expect(rows.map((row) => row[6])).toEqual(entry.ranges["login-password"]);
  });

  test("The exposure page shows the instant's slice, the counts, the address picture with a legend, and a paged CIDR list", async () => {
    const response = await engineer.get(path("clf-gw-02", `exposure?at=${AT}&interface=outside&service=https`));
    expect(response.status).toBe(200);
    const text = plain(response.text);
    const direct = exposure(demoDevice("clf-gw-02"), AT);
    expect(text).toContain(`${direct.slice.start} – ${direct.slice.end}`);
    expect(text).toContain(direct.localTime);
    const entry = direct.entries.find((candidate) => candidate.interface === "outside" && candidate.service === "https")!;
    expect(text).toContain(Number(entry.counts["login-password"]).toLocaleString("en")); // exact IPv4 count with separators
    // The address-space view starts at the whole IPv4 space, 256 cells of /8, special-purpose space named.
    expect(text).toContain("0.0.0.0/0: 256 cells of /8");
    expect(text).toContain("10.0.0.0/8 (Private, RFC 1918)"); // RFC 1918 §3
    expect(text).toContain("Outcomes, worst first"); // the legend: words and letters, not colour alone (WCAG 2.2 SC 1.4.1)
    expect(text).toContain("Login with password only");
    expect(text).toContain("exposure does not change over the week"); // clf-gw-02 has no schedules
    for (const cidr of entry.ranges["login-password"].slice(0, 5)) expect(text).toContain(`>${cidr}<`);
  });

  test("The address-space view zooms through links in the page: each leads to a view with a breadcrumb back out", async () => {
    const start = await engineer.get(path("clf-gw-02", `exposure?at=${AT}&interface=outside&service=https&family=4`));
    expect(start.status).toBe(200);
    const links = [...new Set([...plain(start.text).matchAll(/href="([^"]*\/exposure\?[^"]*block=[^"]+)"/g)].map((match) => match[1]))];
    // clf-gw-02 drops one range of scanners in 203.0.113.0/24 (seeders/devices/README.md), so at least one cell is mixed.
    expect(links.length).toBeGreaterThan(0);
    for (const link of links.slice(0, 5)) {
      const block = new URL(link, "http://x").searchParams.get("block")!;
      const response = await engineer.get(link);
      expect(response.status, link).toBe(200);
      const text = plain(response.text);
      expect(text).toContain(`aria-current="location"`);
      expect(text).toMatch(new RegExp(`aria-current="location"[^>]*>${block.replace(/[./]/g, "\\$&")}<`));
      expect(text).toContain("All IPv4");
      expect(text).toContain("Zoom out");
    }
    // A block the page cannot show is named, and the whole space is shown instead.
    const wrong = await engineer.get(path("clf-gw-02", `exposure?at=${AT}&interface=outside&service=https&family=4&block=2001:db8::/32`));
    expect(wrong.status).toBe(200);
    expect(plain(wrong.text)).toContain('"2001:db8::/32" is not an IPv4 block; showing the whole IPv4 space.');
  });

  test("A device with a support window shows a week × hour view", async () => {
    const response = await engineer.get(path("clf-fw-01", `exposure?at=${AT}&interface=outside&service=https`));
    expect(response.status).toBe(200);
    const map = exposure(demoDevice("clf-fw-01"));
    expect(map.slices.length).toBeGreaterThan(1);
    const text = plain(response.text);
    expect(text).toContain("Worst outcome of the changing addresses in each hour");
    // seeders/devices/README.md: only the vendor network's answer changes over the week; the NOC's does not.
    expect(text).toMatch(/Changes over the week<\/dt><dd[^>]*>.*32.*addresses.*203\.0\.113\.128\/27/s);
    expect(text).toContain("The same all week");
    expect(text).toContain(`The ${map.slices.length} slices in words`);
    for (const slice of map.slices) expect(text).toContain(`${slice.start} – ${slice.end}`);
  });

  test("IPv6 counts are readable: a power of two or rounded, the exact decimal in the tooltip", async () => {
    const response = await engineer.get(path("bwc-edge-v6", `exposure?at=${AT}&family=6`));
    expect(response.status).toBe(200);
    const entries = exposure(demoDevice("bwc-edge-v6"), AT).entries.filter((entry) => entry.to.includes(":"));
    expect(entries.length).toBeGreaterThan(0);
    const big = entries.flatMap((entry) => OUTCOMES.map((outcome) => entry.counts[outcome])).find((count) => BigInt(count) >= 10n ** 15n)!;
    expect(response.text).toContain(`title="${BigInt(big).toLocaleString("en")} addresses"`);
    expect(response.text).not.toContain(`>${big}<`);
  });

  test("A bad time is refused with 400 and the message; the CSV too", async () => {
    const response = await engineer.get(path("clf-gw-02", "exposure?at=31/02/2025"));
    expect(response.status).toBe(400);
    expect(plain(response.text)).toContain('"31/02/2025" is not an ISO 8601 date-time');
    expect((await engineer.get(path("clf-gw-02", "exposure.csv?at=31/02/2025"))).status).toBe(400);
  });
});

describe("Who may see it", () => {
  test("A trainee can read reach and the exposure map", async () => {
    expect((await trainee.get(path("clf-gw-02", `reach?from=203.0.113.50`))).status).toBe(200);
    expect((await trainee.get(path("clf-gw-02", `reach.csv?from=203.0.113.50`))).status).toBe(200);
    expect((await trainee.get(path("clf-gw-02", "exposure"))).status).toBe(200);
    expect((await trainee.get(path("clf-gw-02", "exposure.csv"))).status).toBe(200);
  });

  test("Another organisation's device answers 404, through either organisation's URL", async () => {
    const { client: stranger, slug } = await signUpNewOrganisation("analysis");
    const id = deviceIds.get("clf-gw-02");
    for (const rest of ["reach?from=203.0.113.50", "reach.csv?from=203.0.113.50", "exposure", "exposure.csv"]) {
      expect((await stranger.get(`/o/${slug}/devices/${id}/${rest}`)).status, rest).toBe(404);
      expect((await stranger.get(`/o/lanternfield/devices/${id}/${rest}`)).status, rest).toBe(404);
    }
  });

  test("Signed out, the pages send you to sign in", async () => {
    const response = await new TestClient().get(path("clf-gw-02", "reach?from=203.0.113.50"));
    expect([302, 303]).toContain(response.status);
  });
});

// Reading the pages: counts with separators or in words, instants in the device's zone in
// words rather than ISO text, plurals that agree, and the simulation caution once per page.

import { beforeAll, describe, expect, test } from "vitest";
import { DEMO_PASSWORDS, signUpNewOrganisation, TestClient } from "../support/client";
import { plain, UUID } from "../support/html";
import { ALL_WEEK_SCHEDULE } from "#server/engine/vocabulary";

const CAUTION = "models the configuration, not the device";
/** "Wed 2 Dec 2026, 10:00": the formatting module's day and clock (server/engine/format.ts). */
const IN_WORDS = /(Mon|Tue|Wed|Thu|Fri|Sat|Sun) \d{1,2} (Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec) \d{4}, \d{2}:\d{2}/;

/** What a person sees: the page without its scripts (which carry the loader data) and tags. */
function visible(html: string): string {
  return plain(html)
    .replace(/<script[\s\S]*?<\/script>/g, " ")
    .replace(/<[^>]+>/g, " ")
    .replace(/\s+/g, " ");
}

function occurrences(text: string, needle: string): number {
  return text.split(needle).length - 1;
}

let engineer: TestClient;
const deviceIds = new Map<string, string>();
const devicePath = (name: string, rest = "") => `/o/lanternfield/devices/${deviceIds.get(name)}${rest ? `/${rest}` : ""}`;

beforeAll(async () => {
  engineer = new TestClient();
  expect((await engineer.signIn(...DEMO_PASSWORDS.engineer)).status).toBe(302);
  const fleet = await engineer.get("/o/lanternfield/devices");
  for (const match of fleet.text.matchAll(new RegExp(`href="/o/lanternfield/devices/(${UUID})"[^>]*>([^<]+)<`, "g"))) deviceIds.set(match[2], match[1]);
  if (!deviceIds.has("clf-gw-02")) throw new Error("demo device clf-gw-02 not on the fleet page");
});

describe("One caution per page", () => {
  test("Every page of the device workspace shows the simulation caution exactly once, at its foot", async () => {
    const tabs = ["", "analysis", "reach", "reach?from=203.0.113.50&at=2025-03-04T10:00", "exposure", "model/interfaces", "model/rules", "model/accounts", "model/settings", "history"];
    for (const tab of tabs) {
      const page = await engineer.get(devicePath("clf-gw-02", tab));
      expect(page.status, tab).toBe(200);
      const text = visible(page.text);
      expect(occurrences(text, CAUTION), tab || "overview").toBe(1);
      expect(occurrences(page.text, 'data-testid="simulation-caution"'), tab).toBe(1);
      // At the foot: nothing of the page's own content follows it.
      expect(plain(page.text).indexOf('data-testid="simulation-caution"'), tab).toBeGreaterThan(plain(page.text).lastIndexOf('aria-label="Device"'));
    }
  });

  test("The fleet findings page shows it once; pages without simulated results do not", async () => {
    expect(occurrences(visible((await engineer.get("/o/lanternfield/findings")).text), CAUTION)).toBe(1);
    for (const path of ["/o/lanternfield/devices", "/o/lanternfield/sites", "/o/lanternfield/settings/members", "/account"]) {
      expect(occurrences(visible((await engineer.get(path)).text), CAUTION), path).toBe(0);
    }
  });
});

describe("Numbers, times and plurals", () => {
  test("Counts on the exposure map read with separators or in words, never as a bare long number", async () => {
    const page = await engineer.get(devicePath("clf-gw-02", "exposure?at=2025-03-04T10:00"));
    expect(page.status).toBe(200);
    const text = visible(page.text);
    // 2^32 addresses split by outcome (RFC 4632 §3.1): some of them are billions.
    expect(text).toMatch(/\d\.\d{2} billion/);
    // The exact figure is kept, grouped, for the title and screen readers.
    expect(plain(page.text)).toMatch(/title="\d{1,3}(,\d{3})+ addresses"/);
    expect(text).not.toMatch(/(?<![\d.,:])\d{7,}(?![\d,])/);
  });

  test("The finding texts give their counts in words (the issue's 3702390768)", async () => {
    const text = visible((await engineer.get(devicePath("clf-gw-02"))).text);
    expect(text).toContain("3.70 billion non-private sources");
    expect(text).not.toContain("3702390768");
  });

  test("Instants read in the device's zone in words, with UTC beside them, instead of ISO text", async () => {
    // clf-gw-02 keeps its clock in America/Chicago (seeders/devices/clf-gw-02.json).
    const overview = visible((await engineer.get(devicePath("clf-gw-02"))).text);
    expect(overview).toMatch(new RegExp(`${IN_WORDS.source} America/Chicago \\(((Mon|Tue|Wed|Thu|Fri|Sat|Sun) \\d{1,2} [A-Z][a-z]{2}, )?\\d{2}:\\d{2} UTC\\)`));
    const history = visible((await engineer.get(devicePath("clf-gw-02", "history"))).text);
    expect(history).toContain("When (America/Chicago)");
    expect(history).toMatch(IN_WORDS);
    // CST is UTC−6 in March before the US change (Energy Policy Act of 2005 §110: second Sunday in March, 9 March 2025).
    const reach = visible((await engineer.get(devicePath("clf-gw-02", "reach?from=203.0.113.50&at=2025-03-04T10:00"))).text);
    expect(reach).toContain("At Tue 4 Mar 2025, 10:00 America/Chicago (16:00 UTC)");
    for (const text of [overview, history, reach]) expect(text).not.toMatch(/\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}/);
  });

  test("Counts of one take the singular: '1 account', '1 inbound rule', '1 interface'", async () => {
    const { client, slug } = await signUpNewOrganisation("reading-plurals");
    expect((await client.post(`/o/${slug}/sites`, { intent: "create", name: "Quay", customer: "", location: "" })).status).toBe(302);
    const siteId = (await client.get(`/o/${slug}/sites`)).text.match(new RegExp(`edit=(${UUID})`))?.[1];
    const created = await client.post(`/o/${slug}/devices/new`, { name: "one-of-each", siteId: siteId!, timezone: "UTC" });
    const path = created.location?.replace(/\/model\/interfaces$/, "") ?? "";
    expect(path).toMatch(new RegExp(`/devices/${UUID}$`));
    expect(visible((await client.get(path)).text)).toContain("0 interfaces · 0 inbound rules · 0 accounts");
    const save = async (section: string, fields: Record<string, string>, base: number) => {
      const response = await client.post(`${path}/model/${section}`, { ...fields, baseRevision: String(base) });
      expect(response.status, `${section}: ${plain(response.text).match(/Not saved[^<]*/)?.[0] ?? ""}`).toBe(302);
    };
    await save("interfaces", { intent: "save-interface", original: "", name: "uplink", role: "other", addresses: "192.0.2.1/24", listeners: "ssh" }, 1);
    await save("rules", { intent: "save-rule", original: "", interface: "any", sources: "any", destinations: "any", services: "ssh", schedule: ALL_WEEK_SCHEDULE, action: "allow", enabled: "on", note: "" }, 2);
    await save("accounts", { intent: "save-account", original: "", name: "ops-lena", loginSources: "", secondFactor: "totp", accessLevel: "full", enabled: "on" }, 3);
    const overview = visible((await client.get(path)).text);
    // CLDR plural rules for English: "one" for exactly 1 (Intl.PluralRules).
    expect(overview).toContain("1 interface · 1 inbound rule · 1 account");
    expect(overview).not.toMatch(/\b1 (interfaces|inbound rules|accounts)\b/);
  });
});

// The device and site lists over HTTP: sorting, searching and filtering live in the URL, so a
// view can be shared as a link and works without JavaScript. One fresh organisation.

import { beforeAll, describe, expect, test } from "vitest";
import { signUpNewOrganisation, type TestClient } from "../support/client";
import { plain, UUID } from "../support/html";

let client: TestClient;
let slug: string;
const siteIds = new Map<string, string>();

beforeAll(async () => {
  ({ client, slug } = await signUpNewOrganisation("lists"));
  for (const [name, customer, location] of [
    ["Quay south", "Harbour Trust", "Pier 9"],
    ["Annex", "Zephyr Works", "Mill Lane"],
    ["Quay north", "Harbour Trust", "Pier 1"],
  ]) {
    expect((await client.post(`/o/${slug}/sites`, { intent: "create", name, customer, location })).status).toBe(302);
  }
  const page = plain((await client.get(`/o/${slug}/sites`)).text);
  for (const [link] of page.matchAll(/<a [^>]*aria-label="Edit [^"]+"[^>]*>/g)) {
    const [, name] = /aria-label="Edit ([^"]+)"/.exec(link) ?? [];
    const [, id] = new RegExp(`\\?edit=(${UUID})`).exec(link) ?? [];
    siteIds.set(name, id);
  }
  for (const [name, site] of [
    ["d-gw", "Quay north"],
    ["a-gw", "Quay south"],
    ["b-gw", "Quay north"],
  ]) {
    expect((await client.post(`/o/${slug}/devices/new`, { name, siteId: siteIds.get(site) ?? "", timezone: "UTC" })).status).toBe(302);
  }
});

async function siteNames(query: string): Promise<string[]> {
  const page = await client.get(`/o/${slug}/sites?${query}`);
  expect(page.status).toBe(200);
  return [...plain(page.text).matchAll(/aria-label="Edit ([^"]+)"/g)].map((match) => match[1]);
}

async function deviceNames(query: string): Promise<string[]> {
  const page = await client.get(`/o/${slug}/devices?${query}`);
  expect(page.status).toBe(200);
  return [...plain(page.text).matchAll(new RegExp(`href="/o/${slug}/devices/${UUID}"[^>]*>([^<]+)<`, "g"))].map((match) => match[1]);
}

describe("The site list", () => {
  test("Sites sort by a column from the URL; ties fall back to the name in the same direction", async () => {
    expect(await siteNames("")).toEqual(["Annex", "Quay north", "Quay south"]);
    expect(await siteNames("sort=customer&dir=asc")).toEqual(["Quay north", "Quay south", "Annex"]);
    expect(await siteNames("sort=customer&dir=desc")).toEqual(["Annex", "Quay south", "Quay north"]);
    expect(await siteNames("sort=devices&dir=desc")).toEqual(["Quay north", "Quay south", "Annex"]);
    expect(await siteNames("sort=colour")).toEqual(["Annex", "Quay north", "Quay south"]);
  });

  test("A search matches the name, customer or location, ignoring case", async () => {
    expect(await siteNames("q=PIER")).toEqual(["Quay north", "Quay south"]);
    expect(await siteNames("q=mill")).toEqual(["Annex"]);
    expect(await siteNames("q=zephyr")).toEqual(["Annex"]);
  });
});

describe("The device list", () => {
  test("Devices sort by a column from the URL; ties fall back to the name in the same direction", async () => {
    expect(await deviceNames("")).toEqual(["a-gw", "b-gw", "d-gw"]);
    expect(await deviceNames("dir=desc")).toEqual(["d-gw", "b-gw", "a-gw"]);
    expect(await deviceNames("sort=site&dir=asc")).toEqual(["b-gw", "d-gw", "a-gw"]);
    expect(await deviceNames("sort=site&dir=desc")).toEqual(["a-gw", "d-gw", "b-gw"]);
  });

  test("A search matches the device or site name; the site filter and the search combine", async () => {
    expect(await deviceNames("q=SOUTH")).toEqual(["a-gw"]);
    expect(await deviceNames("q=d-gw")).toEqual(["d-gw"]);
    expect(await deviceNames(`site=${siteIds.get("Quay north")}`)).toEqual(["b-gw", "d-gw"]);
    expect(await deviceNames(`site=${siteIds.get("Quay north")}&q=b-`)).toEqual(["b-gw"]);
    const page = plain((await client.get(`/o/${slug}/devices?q=gw&site=${siteIds.get("Quay south")}`)).text);
    expect(page).toContain("1 of 3 devices");
  });
});

import type { FetchResult, TestClient } from "./client";
import { plain } from "./html";

/**
 * The confirm form of the shared-object review on a page: its hidden fields (the change as
 * entered, the library fingerprint and the device revisions shown), as the browser posts them.
 */
export function reviewConfirmFields(html: string): Record<string, string> {
  const start = html.indexOf('data-testid="shared-change-review"');
  if (start < 0) throw new Error("the page shows no shared-object review");
  const section = html.slice(start, html.indexOf("</section>", start));
  const fields: Record<string, string> = {};
  for (const match of section.matchAll(/<input type="hidden" name="([^"]+)" value="([^"]*)"\/?>/g)) fields[match[1]] = plain(match[2]);
  if (fields.confirm !== "1") throw new Error("the review has no confirm form");
  return fields;
}

/** Confirms the review a page shows, as the "Save and create N new revisions" button does. */
export function confirmReview(client: TestClient, path: string, page: FetchResult): Promise<FetchResult> {
  return client.post(path, reviewConfirmFields(page.text));
}

// Invented devices; documentation addresses (RFC 5737, RFC 3849) stand in for the internet.
/** Uses ops-desk directly in a rule: https and ssh from it, everything else dropped. */
export const QUAY_EDGE = {
  schemaVersion: 2,
  device: { name: "quay-edge", timezone: "Europe/Lisbon" },
  interfaces: [{ name: "outside", role: "wan", addresses: ["203.0.113.10/24", "2001:db8:a::10/64"], listeners: ["https", "ssh"] }],
  inboundRules: [
    { id: "ops-in", interface: "outside", sources: ["ops-desk"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
    { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
  ],
  accounts: [{ name: "ops-lena", secondFactor: "totp" }],
};
/** Uses ops-desk only through the shared group all-operators, as an account's login sources. */
export const PIER_GW = {
  schemaVersion: 2,
  device: { name: "pier-gw" },
  interfaces: [{ name: "outside", role: "wan", addresses: ["192.0.2.20/24"], listeners: ["https"] }],
  accounts: [{ name: "ops-jon", loginSources: ["all-operators"] }],
  operatorNetworks: ["all-operators"],
};

// Fleet reach's question and answer as zod schemas — what the fleet page, its CSV and an API
// endpoint validate with and describe — and the question read from a URL. Pure.

import { z } from "zod";
import { INTERFACE_ROLES, LAYERS, OUTCOMES } from "../engine/vocabulary.ts";

/** Most service words one question may name. */
export const MAX_SERVICE_FILTERS = 20;

/**
 * Which devices a source reaches, and how: an address or CIDR block, an optional instant (ISO
 * 8601; without an offset it is read on each device's own clock), the interface roles and
 * services to keep (all when empty), and a site (all when absent).
 */
export const FleetReachQuerySchema = z.object({
  from: z.string().trim().min(1, "Enter a source address or CIDR block, e.g. 203.0.113.7 or 203.0.113.0/24.").max(100, "That source is too long.").describe("An address or a CIDR block"),
  at: z.string().trim().max(40, "That time is too long.").optional().describe("ISO 8601; without an offset, each device's own clock. Default: now"),
  roles: z.array(z.enum(INTERFACE_ROLES)).max(INTERFACE_ROLES.length).default([]).describe("Interface roles to keep; all when empty"),
  services: z
    .array(z.string().trim().min(1).max(63).regex(/^[A-Za-z0-9._/-]+$/, "A service is a catalogue name, tcp/PORT, udp/PORT or icmp/echo."))
    .max(MAX_SERVICE_FILTERS)
    .default([])
    .describe("Catalogue service names or PROTOCOL/PORT; all when empty"),
  site: z.uuid("Choose a site of this organisation.").optional().describe("Only the devices of this site"),
});
export type FleetReachQuery = z.infer<typeof FleetReachQuerySchema>;
export type FleetReachQueryInput = z.input<typeof FleetReachQuerySchema>;

export const FleetReachRowSchema = z.object({
  deviceId: z.uuid(),
  device: z.string(),
  site: z.string(),
  revision: z.number().int().describe("The device's current revision, which answered"),
  interface: z.string(),
  role: z.enum(INTERFACE_ROLES),
  to: z.string().nullable().describe("The destination: the interface's first address of the source's family"),
  service: z.string(),
  sources: z.array(z.string()).describe("This group's sources inside the block, as a minimal CIDR list"),
  count: z.string().describe("How many addresses the group holds, decimal"),
  outcome: z.enum(OUTCOMES),
  layer: z.enum(LAYERS).describe("The layer that decided the outcome"),
  detail: z.string().describe("That layer's words for the group's first address"),
  ruleId: z.string().nullable(),
  eligibleAccounts: z.array(z.string()),
  at: z.iso.datetime().describe("The instant the device was asked at"),
});
export type FleetReachRowOut = z.infer<typeof FleetReachRowSchema>;

export const FleetReachResultSchema = z.object({
  from: z.string().describe("The source as normalised text"),
  count: z.string().describe("Addresses in the source, decimal"),
  at: z.string().nullable().describe("The time as asked, or null for now"),
  devices: z.number().int().describe("Devices asked"),
  rows: z.array(FleetReachRowSchema).describe("Device × interface × service × group of sources, most exposed first"),
});
export type FleetReachResult = z.infer<typeof FleetReachResultSchema>;

/** The question as a URL holds it, before validation (FleetReachQuerySchema reads it). */
export type FleetReachParams = { from: string; at?: string; roles: string[]; services: string[]; site?: string };

/** The question from a URL: from, at, site, and repeated role= and service= (a service list may also be comma-separated). */
export function fleetReachQueryOf(searchParams: URLSearchParams): FleetReachParams {
  const list = (name: string) =>
    searchParams
      .getAll(name)
      .flatMap((value) => value.split(","))
      .map((value) => value.trim())
      .filter((value) => value !== "");
  const at = searchParams.get("at")?.trim();
  const site = searchParams.get("site")?.trim();
  return {
    from: searchParams.get("from") ?? "",
    ...(at ? { at } : {}),
    roles: list("role"),
    services: list("service"),
    ...(site ? { site } : {}),
  };
}

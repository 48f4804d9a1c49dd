import type { Role } from "#server/auth/roles.ts";

// An invented scenario: the provider, its people and its customers are made up. E-mail
// addresses use the reserved .example domain (RFC 2606). Passwords are for local demos only.
export const DEMO_ORGANISATION = { slug: "lanternfield", name: "Lanternfield Managed Networks", domain: "lanternfield.example" } as const;

export const DEMO_USERS: ReadonlyArray<{ email: string; name: string; role: Role; password: string }> = [
  { email: "maren.holt@lanternfield.example", name: "Maren Holt", role: "owner", password: "demo-password-owner" },
  { email: "tobias.reyes@lanternfield.example", name: "Tobias Reyes", role: "admin", password: "demo-password-admin" },
  { email: "priya.nandakumar@lanternfield.example", name: "Priya Nandakumar", role: "engineer", password: "demo-password-engineer" },
  { email: "oskar.lindqvist@lanternfield.example", name: "Oskar Lindqvist", role: "reviewer", password: "demo-password-reviewer" },
  { email: "jun.watanabe@lanternfield.example", name: "Jun Watanabe", role: "trainee", password: "demo-password-trainee" },
];

/**
 * When the demo devices' first revisions were modelled: a fixed day in the past (or now, on a
 * clock before it), so field checks from the days before a demo is set up — such as every row of
 * public/examples/field-check.csv — are predicted with r1 instead of being refused as older than
 * any model of the device.
 */
export function demoModelledAt(now: Date = new Date()): Date {
  const modelled = new Date("2026-11-02T09:00:00Z");
  return now < modelled ? now : modelled;
}

export const DEMO_SITES = [
  { name: "Brightwater Clinic — main campus", customer: "Brightwater Clinic", location: "Harbour Road 12, Eastmere" },
  { name: "Copperleaf Foods — plant 2", customer: "Copperleaf Foods", location: "Mill Lane industrial estate, Westbury Vale" },
  { name: "Northgate Library Trust — central branch", customer: "Northgate Library Trust", location: "Market Square 3, Northgate" },
] as const;

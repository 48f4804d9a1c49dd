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

export const DEMO_SITES = [
  { name: "Brightwater Clinic — main campus", customer: "Brightwater Clinic", location: "Harbour Road 12, Eastmere" },
  { name: "Copperleaf Foods — plant 2", customer: "Copperleaf Foods", location: "Mill Lane industrial estate, Westbury Vale" },
  { name: "Northgate Library Trust — central branch", customer: "Northgate Library Trust", location: "Market Square 3, Northgate" },
] as const;

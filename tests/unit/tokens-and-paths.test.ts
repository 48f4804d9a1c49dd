import { describe, expect, test } from "vitest";
import { createToken, hashToken } from "#server/auth/tokens.server";
import { hasAtLeastRole, ROLES } from "#server/auth/roles";
import { safeRedirectPath } from "#server/auth/session.server";
import { slugFromName } from "#server/services/organisations.server";

describe("Tokens", () => {
  test("Tokens carry 256 random bits and differ each time", () => {
    const tokens = new Set(Array.from({ length: 200 }, createToken));
    expect(tokens.size).toBe(200);
    for (const token of tokens) expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
  });

  // FIPS 180-4 SHA-256 of "abc" (from memory of the standard's example; recomputed by any sha256 tool).
  test("Stored token hashes are SHA-256 hex", () => {
    expect(hashToken("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  });
});

describe("Roles", () => {
  test("Each role may do what the roles below it may", () => {
    expect(ROLES).toEqual(["trainee", "reviewer", "engineer", "admin", "owner"]);
    for (const [index, role] of ROLES.entries()) {
      for (const [otherIndex, other] of ROLES.entries()) expect(hasAtLeastRole(role, other)).toBe(index >= otherIndex);
    }
  });
});

describe("Redirect targets", () => {
  test.each([
    ["/o/x/sites", "/o/x/sites"],
    ["//evil.example", "/"],
    ["/\\evil.example", "/"],
    ["https://evil.example", "/"],
    ["", "/"],
  ])("safeRedirectPath(%j) is %j", (input, expected) => {
    expect(safeRedirectPath(input)).toBe(expected);
  });
});

describe("Organisation slugs", () => {
  test.each([
    ["Lanternfield Managed Networks", "lanternfield-managed-networks"],
    ["  Ærø & Söderby AB ", "aero-soderby-ab"],
    ["!!!", "organisation"],
  ])("slugFromName(%j) is %j", (name, slug) => {
    expect(slugFromName(name)).toBe(slug);
  });
});

// The Expectations tab's form fields read into the input the engine's schema checks
// (server/http/expectation-form.ts): what a browser posts, for both kinds.
import { describe, expect, test } from "vitest";
import { parseExpectation } from "#server/engine/index.ts";
import { expectationInputOf, fieldOfPath } from "#server/http/expectation-form.ts";

describe("expectation form fields", () => {
  test("a probe's fields become a probe; an empty destination is left out and an empty time means all week", () => {
    const input = expectationInputOf({ kind: "probe", id: " noc-https ", note: "", from: "198.51.100.7", interface: "wan", to: "", service: "https", when: "", expect: "login-mfa", sources: "ignored" });
    expect(input).toEqual({ kind: "probe", id: "noc-https", note: "", from: "198.51.100.7", interface: "wan", service: "https", when: "all-week", expect: "login-mfa" });
    expect(parseExpectation(input).ok).toBe(true);
  });

  test("a bound's sources are split on spaces, commas and lines; the word non-private is kept as the word", () => {
    const listed = expectationInputOf({ kind: "bound", id: "quiet", interface: "wan", service: "ssh", sources: "198.51.100.0/24, 2001:db8::/32\n192.0.2.7", atMost: "silent" });
    expect(listed).toMatchObject({ sources: ["198.51.100.0/24", "2001:db8::/32", "192.0.2.7"] });
    expect(parseExpectation(listed).ok).toBe(true);
    expect(expectationInputOf({ kind: "bound", sources: " Non-Private " })).toMatchObject({ sources: "non-private" });
  });

  test("each problem lands beside its field: the first segment of its path", () => {
    const parsed = parseExpectation(expectationInputOf({ kind: "bound", id: "x", interface: "wan", service: "ssh", sources: "198.51.100.0/24 nonsense", atMost: "silent" }));
    expect(parsed.ok ? [] : parsed.errors.map((e) => fieldOfPath(e.path))).toEqual(["sources"]);
    expect(fieldOfPath("")).toBe("form");
  });
});

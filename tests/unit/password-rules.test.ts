import { describe, expect, test } from "vitest";
import { findPasswordProblem, PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH } from "#server/auth/password-rules";

describe("Password rules (NIST SP 800-63B)", () => {
  // NIST SP 800-63B rev 4 §3.1.1.2: minimum 15 characters for a password used alone.
  test("15 characters is the minimum", () => {
    expect(PASSWORD_MIN_LENGTH).toBe(15);
    expect(findPasswordProblem("fourteen chars")).toMatch(/at least 15/);
    expect(findPasswordProblem("fifteen chars!!")).toBeNull();
  });

  // NIST SP 800-63B: verifiers should permit at least 64 characters.
  test("At least 64 characters are accepted", () => {
    expect(PASSWORD_MAX_LENGTH).toBeGreaterThanOrEqual(64);
    expect(findPasswordProblem("river stone ".repeat(5) + "quartz")).toBeNull();
  });

  // NIST SP 800-63B §5.1.1.2: no composition rules; spaces and Unicode accepted.
  test("No composition rules: all lower-case words with spaces pass; Unicode counts by character", () => {
    expect(findPasswordProblem("purple kettle under bridge")).toBeNull();
    expect(findPasswordProblem("ключ от старой двери")).toBeNull();
    expect(findPasswordProblem("🦊🦊🦊🦊🦊🦊🦊🐢🐢🐢🐢🐢🐢🐢🐝")).toBeNull();
  });

  // NIST SP 800-63B §5.1.1.2: refuse common, repetitive and context-specific values, and say why.
  test("Common, repetitive, sequential and context-specific passwords are refused with the reason", () => {
    expect(findPasswordProblem("passwordpassword")).toMatch(/commonly used/);
    expect(findPasswordProblem("aaaaaaaaaaaaaaaaaaaa")).toMatch(/repetitive/);
    expect(findPasswordProblem("abababababababababab")).toMatch(/repetitive/);
    expect(findPasswordProblem("abcdefghijklmnopq")).toMatch(/sequential/);
    expect(findPasswordProblem("my sallyport password", {})).toMatch(/name of this service/);
    expect(findPasswordProblem("kestrel.wing and more words", { email: "kestrel.wing@test.example" })).toMatch(/e-mail/);
  });
});

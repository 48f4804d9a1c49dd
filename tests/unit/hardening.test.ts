// The shared checks of issue 14 (docs/decisions/013): ids, text, redirects, the outbox's reach
// and which failures become 503 or 409.
import { describe, expect, test } from "vitest";
import { ConnectionRefusedError, DatabaseError, UniqueConstraintError } from "sequelize";
import { isUuid, uuidOrEmpty } from "#server/validation/ids";
import { findTextProblem, textProblem } from "#server/validation/text";
import { documentExportText, MAX_DOCUMENT_REQUEST_BYTES, MAX_MODEL_DOCUMENT_BYTES } from "#server/validation/limits";
import { safeRedirectPath } from "#server/auth/session.server";
import { listensOnLoopbackOnly, outboxEnabledFor } from "#server/config.server";
import { failureKindOf } from "#server/http/failures.server";

describe("Ids are UUIDs in the RFC 9562 §4 string form before they reach PostgreSQL", () => {
  test("UUIDs of versions 1–8 with the RFC variant, and the Nil and Max UUIDs, pass", () => {
    // RFC 9562 Appendix A.1 (version 1) and A.3 (version 4) example values; §5.9 Nil, §5.10 Max.
    for (const id of ["c232ab00-9414-11ec-b3c8-9f6bdeced846", "919108f7-52d1-4320-9bac-f847db4148a8", "00000000-0000-0000-0000-000000000000", "FFFFFFFF-FFFF-FFFF-FFFF-FFFFFFFFFFFF"]) {
      expect(isUuid(id), id).toBe(true);
    }
  });

  test("36 characters of hex digits and dashes that are no UUID are refused (issue 14)", () => {
    for (const id of ["------------------------------------", "0123456789abcdef-0123456789abcdef-01", "919108f7-52d1-0320-9bac-f847db4148a8", "919108f7-52d1-4320-7bac-f847db4148a8", "919108f752d143209bacf847db4148a8", " 919108f7-52d1-4320-9bac-f847db4148a8", "919108f7-52d1-4320-9bac-f847db4148a8\n", "{919108f7-52d1-4320-9bac-f847db4148a8}"]) {
      expect(isUuid(id), id).toBe(false);
    }
    expect(uuidOrEmpty("------------------------------------")).toBe("");
    expect(uuidOrEmpty(null)).toBe("");
  });
});

describe("Text that may be stored", () => {
  test("U+0000, other C0 and C1 controls, DEL and lone surrogates are refused; tabs and line breaks pass in text", () => {
    for (const bad of ["a\u0000b", "a\u0007b", "a\u001bb", "a\u007fb", "a\u0085b", "a\ud800b", "a\udc00b", "\udfff"]) expect(textProblem(bad), JSON.stringify(bad)).not.toBeNull();
    for (const good of ["plain", "two\nlines\r\nand\ttabs", "Zürich — 東京 🛡️", "a\ud83d\udee1b"]) expect(textProblem(good), good).toBeNull();
  });

  test("Names also refuse line breaks, tabs and the bidirectional embedding, override and isolate controls (UAX #9 §2)", () => {
    for (const bad of ["Plant\u202eexe.txt", "a\u202ab", "a\u2066b", "a\u2069b", "two\nlines", "tab\there"]) expect(textProblem(bad, "name"), JSON.stringify(bad)).not.toBeNull();
    expect(textProblem("Plant\u202eexe.txt", "text")).toBeNull();
    expect(textProblem("Ünïcödé Örg", "name")).toBeNull();
  });

  test("The first bad string in a JSON value is found with its path, in keys as well as values", () => {
    expect(findTextProblem({ interfaces: [{ name: "wan" }, { name: "lan", description: "x\u0000" }] })?.path).toBe("interfaces[1].description");
    expect(findTextProblem({ a: { "k\ud800": 1 } })?.path).toBe("a.k\ud800");
    expect(findTextProblem({ a: [1, true, null, "fine"] })).toBeNull();
  });
});

describe("Every export re-imports", () => {
  test("The import's request limit holds a document of the largest size Sallyport stores", () => {
    expect(MAX_DOCUMENT_REQUEST_BYTES).toBeGreaterThan(MAX_MODEL_DOCUMENT_BYTES);
    // Issue 14: a 2.75 MB export was refused (413) by the 2 MiB request limit.
    expect(MAX_MODEL_DOCUMENT_BYTES).toBeGreaterThan(2.75 * 1000 * 1000);
    expect(documentExportText({ a: 1 })).toBe('{\n  "a": 1\n}\n');
  });
});

describe("After sign-in only a path of this site (OWASP ASVS 5.1.5)", () => {
  test("Paths pass with their query and fragment", () => {
    expect(safeRedirectPath("/o/lanternfield/devices?q=edge#top")).toBe("/o/lanternfield/devices?q=edge#top");
    expect(safeRedirectPath("/")).toBe("/");
  });

  test("Anything a browser would read as another site falls back to /, the tab trick of issue 14 included", () => {
    // WHATWG URL Standard: tabs and newlines are removed, "\" is read as "/" in special URLs.
    for (const bad of ["/\t/evil.example", "/%09/evil.example".replace("%09", "\t"), "/\n/evil.example", "/\r/evil.example", "//evil.example", "/\\evil.example", "\\\\evil.example", "https://evil.example", "javascript:alert(1)", " /x", "/ /evil.example", "", null, 42]) {
      const result = safeRedirectPath(bad);
      expect(result, JSON.stringify(bad)).toBe("/");
    }
  });
});

describe("The local outbox opens only on loopback, with its secret, unless explicitly enabled beyond", () => {
  const base = { SALLYPORT_FAKE_SMTP: "1" as const, MAIL_OUTBOX_DIR: "/tmp/outbox", OUTBOX_SECRET: "s".repeat(24), HOST: "127.0.0.1", OUTBOX_BEYOND_LOOPBACK: "0" as const };

  test("Loopback addresses are 127.0.0.0/8 (RFC 1122 §3.2.1.3), ::1 (RFC 4291 §2.5.3) and localhost", () => {
    for (const host of ["127.0.0.1", "127.1.2.3", "::1", "[::1]", "localhost"]) expect(listensOnLoopbackOnly(host), host).toBe(true);
    for (const host of ["0.0.0.0", "::", "192.0.2.10", "2001:db8::1", "sallyport.example"]) expect(listensOnLoopbackOnly(host), host).toBe(false);
  });

  test("Beyond loopback it is off unless OUTBOX_BEYOND_LOOPBACK=1; without a secret or the fake SMTP server it is off", () => {
    expect(outboxEnabledFor(base)).toBe(true);
    expect(outboxEnabledFor({ ...base, HOST: "0.0.0.0" })).toBe(false);
    expect(outboxEnabledFor({ ...base, HOST: "0.0.0.0", OUTBOX_BEYOND_LOOPBACK: "1" })).toBe(true);
    expect(outboxEnabledFor({ ...base, OUTBOX_SECRET: undefined })).toBe(false);
    expect(outboxEnabledFor({ ...base, SALLYPORT_FAKE_SMTP: "0" })).toBe(false);
  });
});

describe("Failures outside a request's control", () => {
  test("An unreachable database is an outage (503), a lost unique race a conflict (409), anything else a bug", () => {
    expect(failureKindOf(new ConnectionRefusedError(new Error("connect ECONNREFUSED 127.0.0.1:1")))).toBe("outage");
    // PostgreSQL Appendix A: 57P01 admin_shutdown, 08006 connection_failure.
    for (const code of ["57P01", "57P03", "08006"]) expect(failureKindOf(new DatabaseError(Object.assign(new Error("terminating connection"), { code, sql: "", parameters: [] }))), code).toBe("outage");
    expect(failureKindOf(new UniqueConstraintError({ message: "duplicate key" }))).toBe("conflict");
    expect(failureKindOf(new DatabaseError(Object.assign(new Error("syntax error"), { code: "42601", sql: "", parameters: [] })))).toBeNull();
    expect(failureKindOf(new Error("boom"))).toBeNull();
  });
});

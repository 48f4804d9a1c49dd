import { describe, expect, test } from "vitest";
import { bearerTokenOf } from "#server/api/endpoint.server";
import { encodeCursor, pageOf, PageQuerySchema } from "#server/api/pagination";
import { apiReference } from "#server/api/reference";
import { apiV1Document } from "#server/api/v1/index";
import { isRefusal } from "#server/errors";

const names = ["alder", "birch", "cedar", "dogwood", "elm"];
const query = (limit: number, cursor?: string) => PageQuerySchema.parse({ limit: String(limit), ...(cursor ? { cursor } : {}) });

describe("The API's cursor paging", () => {
  test("Pages follow one another by cursor until the last, which has none", () => {
    const first = pageOf(names, (name) => name, query(2));
    const second = pageOf(names, (name) => name, query(2, first.nextCursor ?? ""));
    const third = pageOf(names, (name) => name, query(2, second.nextCursor ?? ""));
    expect([first.items, second.items, third.items]).toEqual([["alder", "birch"], ["cedar", "dogwood"], ["elm"]]);
    expect(third.nextCursor).toBeNull();
  });

  test("An item added or removed between two pages neither repeats nor skips the others (keyset paging)", () => {
    const first = pageOf(names, (name) => name, query(2));
    const changed = ["alder", "cedar", "cypress", "dogwood", "elm"]; // birch removed, cypress added after the cursor
    expect(pageOf(changed, (name) => name, query(2, first.nextCursor ?? "")).items).toEqual(["cedar", "cypress"]);
  });

  test("A descending list (revisions, newest first) continues below the cursor", () => {
    const numbers = [9, 7, 4, 2, 1];
    const first = pageOf(numbers, (number) => number, query(2), { descending: true });
    expect(pageOf([9, 8, 7, 4, 2, 1], (number) => number, query(2, first.nextCursor ?? ""), { descending: true }).items).toEqual([4, 2]);
  });

  test("A malformed cursor is a 400 and a cursor of another revision a 409, both on the cursor parameter", () => {
    const refusalOf = (run: () => unknown) => {
      try {
        run();
      } catch (error) {
        if (isRefusal(error)) return { status: error.status, paths: error.issues.map((issue) => issue.path) };
      }
      return null;
    };
    expect(refusalOf(() => pageOf(names, (name) => name, query(2, "bm90LWpzb24")))).toEqual({ status: 400, paths: ["cursor"] });
    expect(refusalOf(() => pageOf(names, (name) => name, query(2, encodeCursor("birch", "r1")), { pin: "r2" }))).toEqual({ status: 409, paths: ["cursor"] });
    expect(PageQuerySchema.safeParse({ limit: "0" }).success).toBe(false);
    expect(PageQuerySchema.safeParse({ limit: "201" }).success).toBe(false);
    expect(PageQuerySchema.parse({}).limit).toBe(50);
  });
});

describe("Bearer tokens in the Authorization header", () => {
  test("The token is read from 'Bearer <token>' only (RFC 6750 §2.1, scheme case-insensitive)", () => {
    const headers = (value: string) => new Request("http://sallyport.test/api/v1/token", { headers: { Authorization: value } });
    expect(bearerTokenOf(headers("Bearer sallyport_p_abc"))).toBe("sallyport_p_abc");
    expect(bearerTokenOf(headers("bearer sallyport_p_abc"))).toBe("sallyport_p_abc");
    expect(bearerTokenOf(headers("Basic dXNlcjpwYXNz"))).toBeNull();
    expect(bearerTokenOf(headers("Bearer two words"))).toBeNull();
    expect(bearerTokenOf(new Request("http://sallyport.test/api/v1/token"))).toBeNull();
  });
});

describe("The API reference page's content", () => {
  test("Every operation of the OpenAPI document is on the page once, with its scope and role, and every problem type has its anchor", () => {
    const document = apiV1Document();
    const reference = apiReference(document);
    const operations = Object.entries(document.paths ?? {}).flatMap(([path, item]) => Object.keys(item ?? {}).map((method) => `${method.toUpperCase()} ${path}`));
    const shown = reference.groups.flatMap((group) => group.operations.map((operation) => `${operation.method} ${operation.path}`));
    expect(shown.sort()).toEqual(operations.sort());
    const trace = reference.groups.flatMap((group) => group.operations).find((operation) => operation.path === "/devices/{device}/trace");
    expect(trace).toMatchObject({ scope: "read", role: "trainee" });
    expect(trace?.parameters.map((parameter) => `${parameter.in}:${parameter.name}`)).toEqual(["path:device", "query:from", "query:interface", "query:service", "query:to", "query:at", "query:account"]);
    expect(reference.problems.map((problem) => problem.anchor)).toContain("problem-rate-limited");
    expect(reference.schemas.map((schema) => schema.name)).toContain("ModelDocument");
  });
});

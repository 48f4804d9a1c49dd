// The error panel's words: a refusal's own message, and a title of ours per status — never the
// status text that reached the browser, which after an in-app navigation can be another status's
// (RFC 9110 §15 defines the codes; the words are ours).
import { describe, expect, test } from "vitest";
import { errorTextOf } from "#app/components/error-panel";

const response = (status: number, statusText: string, data: unknown) => ({ status, statusText, internal: false, data });

describe("errorTextOf", () => {
  test("a 400 reads as not understood, whatever status text came with it, with the refusal's message", () => {
    const text = errorTextOf(response(400, "Internal Server Error", { message: "The title is missing." }));
    expect(text).toMatchObject({ status: 400, title: "Not understood", message: "The title is missing." });
  });

  test("403, 404 and 409 have their own titles; an unknown 5xx is 'Something went wrong'", () => {
    expect(errorTextOf(response(403, "", null)).title).toBe("Not allowed");
    expect(errorTextOf(response(404, "", null)).title).toBe("Not found");
    expect(errorTextOf(response(409, "Conflict", { message: "r3 is live now." })).title).toBe("Changed meanwhile");
    expect(errorTextOf(response(502, "Bad Gateway", null)).title).toBe("Something went wrong");
  });
});

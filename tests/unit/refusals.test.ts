// A refusal becomes a response in one place (server/http/refusals.server.ts, docs/decisions/006).
// A refusal by the gate carries its reasons as a list: a page lists each once, so the form's
// message is the lead without their words; an API client reads the whole message, words and all.

import { describe, expect, test } from "vitest";
import { Refusal } from "#server/errors";
import { refusedForm, refusedJson } from "#server/http/refusals.server";

const REASONS = [
  { kind: "lockout", words: "Operator network “noc” would lose every login path.", details: ["no login any more from 198.51.100.0/26"] },
  { kind: "expectation", words: "Expectation “noc-ssh” held before this change and fails after it.", details: [] },
];
const LEAD = "Not submitted: the lockout guard and a failing expectation block this change.";
const gateRefusal = () => new Refusal(`${LEAD} ${REASONS.map((reason) => reason.words).join(" ")}`, 409, { reasons: REASONS, lead: LEAD, field: "acknowledgement" });

describe("A gate's refusal says each reason once", () => {
  test("On a form: the message is the lead, at the top and beside the field; the reasons come as a list; the status and typed values stay", () => {
    const response = refusedForm(gateRefusal(), { intent: "submit", acknowledgement: "too short" });
    expect(response.init?.status).toBe(409);
    expect(response.data.errors).toEqual({ form: LEAD, acknowledgement: LEAD });
    expect(response.data.reasons).toEqual(REASONS);
    expect(response.data.values).toEqual({ intent: "submit", acknowledgement: "too short" });
    for (const reason of REASONS) expect(JSON.stringify(response.data.errors)).not.toContain(reason.words);
  });

  test("Over JSON: the whole message, with the reasons beside it", async () => {
    const response = refusedJson(gateRefusal());
    expect(response.status).toBe(409);
    const body = (await response.json()) as { error: string; reasons: unknown };
    expect(body.error).toBe(`${LEAD} ${REASONS[0].words} ${REASONS[1].words}`);
    expect(body.reasons).toEqual(REASONS);
  });

  test("A refusal without reasons keeps its message on the form, whatever its lead", () => {
    const response = refusedForm(new Refusal("Submitting past the lockout guard needs a written reason of at least 20 characters.", 400, { field: "acknowledgement", lead: "ignored" }), {});
    expect(response.data.errors.form).toBe("Submitting past the lockout guard needs a written reason of at least 20 characters.");
  });
});

// The pure rules of change proposals (server/proposals/): the state machine, the change
// window in a device's time zone, the gate (lockout guard and "where I work from") and
// bringing a stale draft up to date. No database.

import { describe, expect, test } from "vitest";
import { PROPOSAL_STATES, type ProposalState } from "#models/proposal-states";
import { compileModel, trace, type Expectation } from "#server/engine/index";
import { bringUpToDate } from "#server/proposals/bring-up-to-date";
import { instantInZone, isInsideWindow, localText, windowProblem } from "#server/proposals/change-window";
import { gateReasons, loginPaths } from "#server/proposals/gate.server";
import { nextState, notOpenWords, PROPOSAL_ACTIONS, type ProposalAction } from "#server/proposals/state";
import { applyElementEdits, EMPTY_LIBRARY, moveRule, resolveElementEdit, validateDocument, type ElementEdit, type ModelDocument } from "#server/workspace/index";

describe("A proposal's life is one table of steps", () => {
  // Where the issue is silent, a change-controlled team's expectation (docs/decisions/010):
  // an edit after approval sends the proposal back to review; closed proposals stay closed.
  const EXPECTED: Record<ProposalAction, Partial<Record<ProposalState, ProposalState>>> = {
    edit: { draft: "draft", in_review: "in_review", changes_requested: "changes_requested", approved: "in_review" },
    "bring-up-to-date": { draft: "draft", in_review: "in_review", changes_requested: "changes_requested", approved: "in_review" },
    submit: { draft: "in_review", changes_requested: "in_review" },
    comment: { draft: "draft", in_review: "in_review", changes_requested: "changes_requested", approved: "approved" },
    "request-changes": { in_review: "changes_requested", approved: "changes_requested" },
    approve: { in_review: "in_review", approved: "approved" },
    "complete-approval": { in_review: "approved", approved: "approved" },
    reject: { in_review: "rejected", changes_requested: "rejected", approved: "rejected" },
    withdraw: { draft: "withdrawn", in_review: "withdrawn", changes_requested: "withdrawn", approved: "withdrawn" },
    apply: { approved: "applied" },
  };

  test.each(PROPOSAL_ACTIONS.flatMap((action) => PROPOSAL_STATES.map((state) => [action, state] as const)))("%s in %s", (action, state) => {
    expect(nextState(state, action)).toBe(EXPECTED[action][state] ?? null);
  });

  test("Applied, rejected and withdrawn proposals are closed: no step leads out of them", () => {
    for (const state of ["applied", "rejected", "withdrawn"] as const) for (const action of PROPOSAL_ACTIONS) expect(nextState(state, action)).toBeNull();
  });

  test("Only an approved proposal is applied, and only through review", () => {
    const reachable = new Set<ProposalState>(["draft"]);
    for (let round = 0; round < 10; round++) for (const state of [...reachable]) for (const action of PROPOSAL_ACTIONS) { const next = nextState(state, action); if (next) reachable.add(next); }
    expect([...reachable].sort()).toEqual([...PROPOSAL_STATES].sort());
    const into = (target: ProposalState) => PROPOSAL_STATES.flatMap((state) => PROPOSAL_ACTIONS.filter((action) => nextState(state, action) === target && state !== target).map((action) => `${state}→${action}`));
    expect(into("applied")).toEqual(["approved→apply"]);
    expect(into("approved")).toEqual(["in_review→complete-approval"]);
  });

  test("A refused step says why in words", () => {
    expect(notOpenWords("draft", "apply")).toBe("This proposal cannot be applied: it is still a draft: the author submits it for review first.");
    expect(notOpenWords("applied", "edit")).toBe("This proposal cannot be edited: it is applied already.");
  });
});

describe("The change window is entered in the device's time zone", () => {
  test("A wall-clock time in Oslo in winter is one hour ahead of UTC", () => {
    // IANA tz database: Europe/Oslo is UTC+1 in winter (CET), UTC+2 in summer (CEST) — from memory.
    const start = instantInZone("2026-12-08T22:00", "Europe/Oslo");
    expect(start).toEqual({ ok: true, at: new Date("2026-12-08T21:00:00Z") });
    const summer = instantInZone("2026-07-08T22:00", "Europe/Oslo");
    expect(summer).toEqual({ ok: true, at: new Date("2026-07-08T20:00:00Z") });
    expect(localText(new Date("2026-12-08T21:00:00Z"), "Europe/Oslo")).toBe("2026-12-08T22:00");
  });

  test("A time the clocks skip is refused, not moved", () => {
    // EU summer time starts on the last Sunday of March at 01:00 UTC (Directive 2000/84/EC): 02:00–03:00 local does not exist in Oslo on 29 March 2026.
    const skipped = instantInZone("2026-03-29T02:30", "Europe/Oslo");
    expect(skipped.ok).toBe(false);
    if (!skipped.ok) expect(skipped.problem).toBe("2026-03-29 02:30 does not exist in Europe/Oslo (the clocks go forward then).");
    expect(instantInZone("08.12.2026 22:00", "UTC")).toEqual({ ok: false, problem: "Enter a date and time, like 2026-12-08T22:00." });
  });

  test("A window starts inclusive and ends exclusive; it must be in order, short and not over", () => {
    const window = { start: new Date("2026-12-08T21:00:00Z"), end: new Date("2026-12-08T22:30:00Z") };
    expect(isInsideWindow(window, new Date("2026-12-08T20:59:59Z"))).toBe(false);
    expect(isInsideWindow(window, new Date("2026-12-08T21:00:00Z"))).toBe(true);
    expect(isInsideWindow(window, new Date("2026-12-08T22:29:59Z"))).toBe(true);
    expect(isInsideWindow(window, new Date("2026-12-08T22:30:00Z"))).toBe(false);
    const now = new Date("2026-12-01T12:00:00Z");
    expect(windowProblem(window, now)).toBeNull();
    expect(windowProblem({ start: window.end, end: window.start }, now)).toBe("The window must end after it starts.");
    expect(windowProblem({ start: window.start, end: new Date("2026-12-30T00:00:00Z") }, now)).toBe("A change window lasts at most 14 days.");
    expect(windowProblem(window, new Date("2026-12-09T00:00:00Z"))).toBe("That window is over already: choose one that ends in the future.");
  });
});

function normalised(input: unknown): ModelDocument {
  const validated = validateDocument(input, EMPTY_LIBRARY);
  if (!validated.ok) throw new Error(`fixture invalid: ${JSON.stringify(validated.errors)}`);
  return validated.effective;
}

/** Invented scenario: a marina office gateway. The NOC works from 10.40.8.0/24 (RFC 1918); the internet is RFC 5737. */
const MARINA = normalised({
  schemaVersion: 2,
  device: { name: "marina-gw", timezone: "Europe/Lisbon" },
  interfaces: [
    { name: "outside", role: "wan", addresses: ["203.0.113.9/24"], listeners: ["https", "ping"] },
    { name: "inside", role: "lan", addresses: ["10.40.0.1/16"], listeners: ["https", "ssh"] },
  ],
  addresses: [
    { name: "noc-net", entries: ["10.40.8.0/24"] },
    { name: "home-desk", entries: ["10.40.77.7"] },
  ],
  inboundRules: [
    { id: "r1", interface: "inside", sources: ["noc-net"], destinations: ["any"], services: ["ssh", "https"], action: "allow" },
    { id: "r2", interface: "inside", sources: ["home-desk"], destinations: ["any"], services: ["ssh"], action: "allow" },
    { id: "r3", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "final drop" },
  ],
  accounts: [{ name: "ops-rui", loginSources: ["noc-net", "home-desk"], secondFactor: "totp" }],
  operatorNetworks: ["noc-net"],
});

describe("The gate names every reason a change is blocked", () => {
  const before = compileModel(MARINA);

  test("Moving the catch-all deny to the top locks out the operator network: blocked, with the addresses", () => {
    const after = compileModel(moveRule(MARINA, "r3", 1), { basis: before });
    const reasons = gateReasons({ before, after });
    expect(reasons.map((reason) => reason.kind)).toEqual(["lockout"]);
    expect(reasons[0].words).toContain("“noc-net” would lose every login path");
    expect(reasons[0].details).toEqual(["no login any more from 10.40.8.0/24"]);
    // The engine's own trace agrees: a NOC address no longer gets a login (first match wins, common practice).
    expect(trace(before, { from: "10.40.8.20", interface: "inside", service: "ssh" }).outcome).toBe("login-mfa");
    expect(trace(after, { from: "10.40.8.20", interface: "inside", service: "ssh" }).outcome).toBe("silent");
  });

  test("The address the author works from losing its only login blocks; an unrelated change does not", () => {
    const withoutDesk = { ...MARINA, inboundRules: MARINA.inboundRules.filter((rule) => rule.id !== "r2") };
    const after = compileModel(withoutDesk, { basis: before });
    expect(loginPaths(before, "10.40.77.7")).toEqual(["inside ssh"]);
    expect(loginPaths(after, "10.40.77.7")).toEqual([]);
    const reasons = gateReasons({ before, after, workFrom: "10.40.77.7" });
    expect(reasons).toEqual([{ kind: "work-from", words: "10.40.77.7, where you said you work from, would lose every login it has.", details: ["it logs in today on inside ssh"] }]);
    // Someone else's address is not the author's concern here: nothing blocks.
    expect(gateReasons({ before, after, workFrom: "10.40.8.20" })).toEqual([]);
    // An address that never had a login cannot lose it.
    expect(gateReasons({ before, after, workFrom: "198.51.100.4" })).toEqual([]);
  });

  // Decision 011: an expectation blocks when it held before and fails after — or can no longer
  // be checked; one that already failed does not (the change did not break it).
  const deskSsh: Expectation = { id: "desk-ssh", note: "", kind: "probe", from: "10.40.77.7", interface: "inside", service: "ssh", when: "all-week", expect: "login-mfa" };
  const noPasswordLogin: Expectation = { id: "no-password-login", note: "", kind: "bound", sources: ["10.40.0.0/16"], interface: "inside", service: "ssh", atMost: "login-mfa" };

  test("An expectation that held and fails after the change blocks, naming its witness; one that failed already does not", () => {
    const withoutDesk = { ...MARINA, inboundRules: MARINA.inboundRules.filter((rule) => rule.id !== "r2") };
    const after = compileModel(withoutDesk, { basis: before });
    const reasons = gateReasons({ before, after, expectations: [deskSsh] });
    expect(reasons.map((reason) => reason.kind)).toEqual(["expectation"]);
    expect(reasons[0].words).toMatch(/^Expectation “desk-ssh” held before this change and fails after it: /);
    expect(reasons[0].details[0]).toBe("expected: 10.40.77.7 → inside ssh: Login with second factor, all week");
    // The witness it names is what `trace` gives on the new model.
    const witness = /^witness: (\S+) → inside ssh \(to (\S+)\) at (\S+) gets (.+)$/.exec(reasons[0].details.at(-1) ?? "");
    expect(witness).not.toBeNull();
    const traced = trace(after, { from: witness?.[1] ?? "", interface: "inside", service: "ssh", to: witness?.[2], at: witness?.[3] });
    expect(traced.outcome).toBe("silent");
    expect(witness?.[4]).toBe("No answer");
    // Broken already on the old model: the change is not what broke it, so it does not block (the reverse change fixes it).
    expect(gateReasons({ before: after, after: before, expectations: [deskSsh] })).toEqual([]);
    // A bound that holds on both sides does not block either.
    expect(gateReasons({ before, after, expectations: [noPasswordLogin] })).toEqual([]);
  });

  test("An expectation that can no longer be checked (its interface renamed away) blocks as well", () => {
    const renamed = normalised({
      ...MARINA,
      interfaces: MARINA.interfaces.map((entry) => (entry.name === "inside" ? { ...entry, name: "office" } : entry)),
      inboundRules: MARINA.inboundRules.map((rule) => (rule.interface === "inside" ? { ...rule, interface: "office" } : rule)),
    });
    const reasons = gateReasons({ before, after: compileModel(renamed, { basis: before }), expectations: [deskSsh, noPasswordLogin] });
    expect(reasons.map((reason) => /^Expectation “([^”]+)” held before this change and can no longer be checked after it: Cannot be checked/.exec(reason.words)?.[1])).toEqual(["desk-ssh", "no-password-login"]);
  });

  test("A login limited to a schedule counts from the time it starts", () => {
    const scheduled = normalised({
      ...MARINA,
      schedules: [{ name: "weekday-days", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "18:00" }] }],
      inboundRules: [{ ...MARINA.inboundRules[1], schedule: "weekday-days" }, MARINA.inboundRules[0], MARINA.inboundRules[2]],
    });
    expect(loginPaths(compileModel(scheduled), "10.40.77.7")).toEqual(["inside ssh (from mon 08:00)"]);
  });
});

describe("A stale draft is brought up to date by re-applying its edits on the live revision", () => {
  const base = MARINA;
  // The draft: r2 also allows https, and the catch-all deny gets a note.
  const draftEdits: ElementEdit[] = [
    { kind: "rule.update", ruleId: "r2", rule: { ...base.inboundRules[1], services: ["ssh", "https"] } },
    { kind: "rule.update", ruleId: "r3", rule: { ...base.inboundRules[2], note: "final drop, reviewed" } },
  ];

  test("Without a conflict the edits land on the live revision and keep its own changes", () => {
    const live = { ...base, interfaces: base.interfaces.map((entry) => (entry.name === "outside" ? { ...entry, listeners: ["https"] } : entry)) };
    const result = bringUpToDate(base, live, draftEdits);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.document.interfaces[0].listeners).toEqual(["https"]);
    expect(result.document.inboundRules[1].services).toEqual(["ssh", "https"]);
    expect(result.document.inboundRules[2].note).toBe("final drop, reviewed");
  });

  test("The same rule changed on both sides is a conflict, settled per element: keep the draft's or take the live one", () => {
    const live = { ...base, inboundRules: base.inboundRules.map((rule) => (rule.id === "r2" ? { ...rule, sources: ["noc-net"] } : rule)) };
    const listed = bringUpToDate(base, live, draftEdits);
    expect(listed.ok).toBe(false);
    if (listed.ok) return;
    expect(listed.conflicts).toEqual([{ key: "inboundRules:r2", words: "inbound rule r2", live: ["changed: sources: home-desk → noc-net"], draft: ["Changed inbound rule r2"], problem: null }]);

    const keepDraft = bringUpToDate(base, live, draftEdits, { "inboundRules:r2": "draft" });
    expect(keepDraft.ok && keepDraft.document.inboundRules[1]).toMatchObject({ sources: ["home-desk"], services: ["ssh", "https"] });
    const takeLive = bringUpToDate(base, live, draftEdits, { "inboundRules:r2": "live" });
    expect(takeLive.ok).toBe(true);
    if (!takeLive.ok) return;
    expect(takeLive.document.inboundRules[1]).toMatchObject({ sources: ["noc-net"], services: ["ssh"] });
    // The other edit still lands; the dropped one is named.
    expect(takeLive.document.inboundRules[2].note).toBe("final drop, reviewed");
    expect(takeLive.edits).toHaveLength(1);
    expect(takeLive.dropped).toEqual([draftEdits[0]]);
    expect(takeLive.settled).toEqual([{ key: "inboundRules:r2", choice: "live" }]);
  });

  test("An edit of a rule deleted live cannot keep the draft's change: only the live version is offered", () => {
    const live = { ...base, inboundRules: base.inboundRules.filter((rule) => rule.id !== "r2") };
    const listed = bringUpToDate(base, live, draftEdits, { "inboundRules:r2": "draft" });
    expect(listed.ok).toBe(false);
    if (listed.ok) return;
    expect(listed.conflicts[0]).toMatchObject({ key: "inboundRules:r2", live: ["removed"] });
    expect(listed.conflicts[0].problem).toContain("no longer applies");
    const settled = bringUpToDate(base, live, draftEdits, { "inboundRules:r2": "live" });
    expect(settled.ok && settled.document.inboundRules.map((rule) => rule.id)).toEqual(["r1", "r3"]);
  });

  test("Re-applied on the base itself, the edits give the draft", () => {
    const resolved: ElementEdit[] = [];
    let document = base;
    for (const edit of draftEdits) {
      const step = resolveElementEdit(document, edit);
      resolved.push(step);
      document = applyElementEdits(document, [step]);
    }
    const result = bringUpToDate(base, base, resolved);
    expect(result.ok && result.document).toEqual(document);
  });
});

// The stable finding key (code + sorted elements) that lets a dismissal outlive a revision,
// and the fleet findings page's filters and order, without a database.

import { describe, expect, test } from "vitest";
import { filterFindingRows, groupFindingRows, parseFindingsQuery, sortFindingRows, type FindingRowLike } from "#app/utils/finding-keys";
import { countBySeverity, findingKey, parseFindingKey } from "#server/engine/finding-keys";
import { SEVERITIES } from "#server/engine/vocabulary";
import { dismissalRuleOf, LOCKOUT_NOT_DISMISSIBLE } from "#server/services/dismissal-rules";
import { dismissalReasonSchema } from "#server/http/schemas";

describe("Finding keys", () => {
  test("A finding's key ignores element order, so the same finding on a later revision has the same key", () => {
    const first = findingKey({ code: "internet-login-exposed", elements: ["service:https", "interface:outside"] });
    const later = findingKey({ code: "internet-login-exposed", elements: ["interface:outside", "service:https"] });
    expect(first).toBe(later);
    expect(first).toBe("internet-login-exposed interface:outside service:https");
    expect(findingKey({ code: "internet-login-exposed", elements: ["interface:outside", "service:ssh"] })).not.toBe(first);
  });

  test("A key round-trips through a form, and a typed or tampered value is refused", () => {
    expect(parseFindingKey("default-account-name account:admin")).toEqual({ code: "default-account-name", elements: ["account:admin"] });
    expect(parseFindingKey("lockout operator-network:lf-noc")).toEqual({ code: "lockout", elements: ["operator-network:lf-noc"] });
    for (const bad of ["", "<script>", "Default account:admin", "default-account-name account:", "default-account-name admin", `x ${"account:a ".repeat(20).trim()}`, "a".repeat(1001), 42, null]) {
      expect(parseFindingKey(bad), String(bad).slice(0, 40)).toBeNull();
    }
  });
});

const row = (severity: string, deviceName: string, code: string, dismissed = false): FindingRowLike => ({ severity, deviceName, code, dismissed, deviceId: `${deviceName}-id`, siteId: "site", title: `${code} on ${deviceName}` });

describe("Fleet findings filters and order", () => {
  const rows = [row("low", "b-gw", "internet-ping"), row("critical", "a-gw", "lockout"), row("high", "c-gw", "no-second-factor", true), row("medium", "a-gw", "shadowed-rule")];

  test("Severity 'at least' includes the threshold and everything worse; dismissed rows show only on request", () => {
    const query = parseFindingsQuery(new URLSearchParams("severity=medium"));
    expect(filterFindingRows(rows, query).map((entry) => entry.code)).toEqual(["lockout", "shadowed-rule"]);
    const withDismissed = parseFindingsQuery(new URLSearchParams("severity=medium&dismissed=show"));
    expect(filterFindingRows(rows, withDismissed).map((entry) => entry.code)).toEqual(["lockout", "no-second-factor", "shadowed-rule"]);
  });

  test("The default order is worst first; device and check sort A to Z, reversible", () => {
    const worstFirst = parseFindingsQuery(new URLSearchParams(""));
    expect(sortFindingRows(rows, worstFirst.sort, worstFirst.descending).map((entry) => entry.severity)).toEqual(["critical", "high", "medium", "low"]);
    expect(sortFindingRows(rows, "device", false).map((entry) => entry.deviceName)).toEqual(["a-gw", "a-gw", "b-gw", "c-gw"]);
    // Ties on the device fall back to worst first.
    expect(sortFindingRows(rows, "device", false).slice(0, 2).map((entry) => entry.severity)).toEqual(["critical", "medium"]);
    expect(sortFindingRows(rows, "code", true).map((entry) => entry.code)).toEqual(["shadowed-rule", "no-second-factor", "lockout", "internet-ping"]);
  });

  test("'Awaiting my confirmation' keeps only the rows whose dismissal the viewer may confirm", () => {
    const waiting = [...rows, { ...row("high", "d-gw", "default-account-name"), awaitsMyConfirmation: true }, { ...row("critical", "e-gw", "no-second-factor"), awaitsMyConfirmation: false }];
    expect(filterFindingRows(waiting, parseFindingsQuery(new URLSearchParams("awaiting=mine"))).map((entry) => entry.deviceName)).toEqual(["d-gw"]);
    // Any other value is no filter.
    expect(filterFindingRows(waiting, parseFindingsQuery(new URLSearchParams("awaiting=everyone")))).toHaveLength(5);
  });

  test("Unknown query values fall back to no filter, and counts cover every severity", () => {
    const query = parseFindingsQuery(new URLSearchParams("severity=dire&code=<x>&site=nope&sort=colour"));
    expect(query).toMatchObject({ minSeverity: "", code: "", site: "", sort: "severity", descending: true, showDismissed: false, awaitingMine: false, group: "code" });
    expect(countBySeverity(rows)).toEqual({ info: 0, low: 1, medium: 1, high: 1, critical: 1 });
  });

  test("Grouping keeps each group's rows in order, puts groups with the worst active finding first, and dismissed-only groups last", () => {
    const all = [...rows, row("info", "b-gw", "lockout"), row("high", "d-gw", "unused-object", true)];
    const sorted = sortFindingRows(all, "severity", true);
    const byCode = groupFindingRows(sorted, "code");
    expect(byCode.map((group) => group.key)).toEqual(["lockout", "shadowed-rule", "internet-ping", "no-second-factor", "unused-object"]);
    expect(byCode[0]).toMatchObject({ worst: "critical", active: 2 });
    expect(byCode[0].rows.map((entry) => entry.deviceName)).toEqual(["a-gw", "b-gw"]);
    // A dismissed finding does not make its group look worse than its active ones.
    expect(byCode.at(-1)).toMatchObject({ key: "unused-object", worst: "high", active: 0 });
    const byDevice = groupFindingRows(sorted, "device");
    expect(byDevice.map((group) => group.key)).toEqual(["a-gw-id", "b-gw-id", "c-gw-id", "d-gw-id"]);
    expect(byDevice[0].rows.map((entry) => entry.code)).toEqual(["lockout", "shadowed-rule"]);
    expect(groupFindingRows(sorted, "none")).toEqual([{ key: "", rows: sorted, worst: "critical", active: 4 }]);
    // Every row lands in exactly one group.
    for (const by of ["code", "device", "none"] as const) expect(groupFindingRows(sorted, by).flatMap((group) => group.rows)).toHaveLength(all.length);
  });
});

describe("Dismissal rules", () => {
  test("High and critical findings need 20 characters and a second person; medium and below keep 3 and one; a lockout is never dismissed", () => {
    // Issue 11, item 8 (Sallyport's own thresholds; the two-person rule is separation of duties, NIST SP 800-53 Rev. 5 AC-5).
    const rules = Object.fromEntries(SEVERITIES.map((severity) => [severity, dismissalRuleOf({ code: "no-second-factor", severity })]));
    expect(rules).toEqual({
      info: { kind: "direct", minReason: 3 },
      low: { kind: "direct", minReason: 3 },
      medium: { kind: "direct", minReason: 3 },
      high: { kind: "confirmed", minReason: 20 },
      critical: { kind: "confirmed", minReason: 20 },
    });
    for (const severity of SEVERITIES) expect(dismissalRuleOf({ code: "lockout", severity })).toEqual({ kind: "refused", message: LOCKOUT_NOT_DISMISSIBLE });
  });

  test("The reason is trimmed and measured against the finding's rule", () => {
    const confirmed = dismissalReasonSchema({ kind: "confirmed", minReason: 20 });
    const nineteen = confirmed.safeParse("  Accepted by the CSO  ");
    expect(nineteen.success).toBe(false);
    expect(nineteen.error?.issues[0]?.message).toBe("A high or critical finding needs a reason of at least 20 characters (this one has 19), so the reviewer who confirms it can judge the risk.");
    expect(confirmed.safeParse(" Accepted by the CSO. ").data).toBe("Accepted by the CSO.");
    const direct = dismissalReasonSchema({ kind: "direct", minReason: 3 });
    expect(direct.safeParse("ok").success).toBe(false);
    expect(direct.safeParse("yes").success).toBe(true);
    expect(direct.safeParse("x".repeat(501)).error?.issues[0]?.message).toBe("Keep the reason to at most 500 characters.");
  });
});

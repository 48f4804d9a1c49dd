// Pure helpers shared by the findings service and pages: the stable key that names a
// finding across revisions, severity counting, and the fleet page's URL query.

/** Least to most severe, as the engine orders them (docs/engine.md "Findings"). */
export const SEVERITY_SCALE = ["info", "low", "medium", "high", "critical"] as const;
export type SeverityName = (typeof SEVERITY_SCALE)[number];

export type SeverityCountsRecord = Record<SeverityName, number>;

/** The part of a finding that identifies it; severity and wording may change between revisions. */
export type FindingIdentity = { code: string; elements: readonly string[] };

const CODE_PATTERN = /^[a-z][a-z-]{0,39}$/;
// An element is "kind:name"; names follow the engine's NAME_PATTERN ([A-Za-z0-9._-]{1,63}).
const ELEMENT_PATTERN = /^[a-z][a-z-]{0,29}:[A-Za-z0-9._-]{1,63}$/;
const MAX_ELEMENTS = 16;

/**
 * Code and sorted elements, space-separated (names never contain spaces). The same finding
 * on a later revision has the same key, so a dismissal keeps applying to it; severity is
 * left out because a rule change elsewhere can move it without changing what is accepted.
 */
export function findingKey(finding: FindingIdentity): string {
  return [finding.code, ...[...finding.elements].sort()].join(" ");
}

/** The code and elements of a well-formed key, or null (a typed or tampered value). */
export function parseFindingKey(value: unknown): FindingIdentity | null {
  if (typeof value !== "string" || value.length > 1000) return null;
  const [code = "", ...elements] = value.trim().split(" ");
  if (!CODE_PATTERN.test(code) || elements.length > MAX_ELEMENTS || !elements.every((element) => ELEMENT_PATTERN.test(element))) return null;
  return { code, elements: [...elements].sort() };
}

export function isSeverity(value: unknown): value is SeverityName {
  return typeof value === "string" && (SEVERITY_SCALE as readonly string[]).includes(value);
}

export function severityRank(severity: string): number {
  return SEVERITY_SCALE.indexOf(severity as SeverityName);
}

export function emptySeverityCounts(): SeverityCountsRecord {
  return { info: 0, low: 0, medium: 0, high: 0, critical: 0 };
}

export function countBySeverity(items: ReadonlyArray<{ severity: string }>): SeverityCountsRecord {
  const counts = emptySeverityCounts();
  for (const item of items) if (isSeverity(item.severity)) counts[item.severity] += 1;
  return counts;
}

export const FINDING_SORTS = ["severity", "device", "code"] as const;
export type FindingSort = (typeof FINDING_SORTS)[number];

/** The fleet findings page's filters and order, all in the URL so a view can be shared. */
export type FindingsQuery = {
  /** Show findings at this severity or above ("" = all). */
  minSeverity: SeverityName | "";
  code: string;
  site: string;
  device: string;
  showDismissed: boolean;
  sort: FindingSort;
  descending: boolean;
};

/**
 * Reads the query leniently: an unknown value falls back to "no filter" rather than an
 * error, because these links are shared and bookmarked and old values must still open.
 */
export function parseFindingsQuery(params: URLSearchParams): FindingsQuery {
  const severity = params.get("severity") ?? "";
  const code = params.get("code") ?? "";
  const sort = FINDING_SORTS.find((candidate) => candidate === params.get("sort")) ?? "severity";
  return {
    minSeverity: isSeverity(severity) ? severity : "",
    code: CODE_PATTERN.test(code) ? code : "",
    site: /^[0-9a-f-]{36}$/i.test(params.get("site") ?? "") ? (params.get("site") ?? "") : "",
    device: /^[0-9a-f-]{36}$/i.test(params.get("device") ?? "") ? (params.get("device") ?? "") : "",
    showDismissed: params.get("dismissed") === "show",
    sort,
    // Severity reads naturally worst-first; the other columns A→Z.
    descending: params.has("dir") ? params.get("dir") === "desc" : sort === "severity",
  };
}

export type FindingRowLike = { severity: string; code: string; deviceName: string; siteId: string; deviceId: string; title: string; dismissed: boolean };

/** Rows that pass the filters (the severity threshold is inclusive). */
export function filterFindingRows<Row extends FindingRowLike>(rows: readonly Row[], query: FindingsQuery): Row[] {
  const threshold = query.minSeverity ? severityRank(query.minSeverity) : -1;
  return rows.filter(
    (row) =>
      severityRank(row.severity) >= threshold &&
      (!query.code || row.code === query.code) &&
      (!query.site || row.siteId === query.site) &&
      (!query.device || row.deviceId === query.device) &&
      (query.showDismissed || !row.dismissed),
  );
}

/** Sorts by the chosen column; ties fall back to severity (worst first), device, then title. */
export function sortFindingRows<Row extends FindingRowLike>(rows: readonly Row[], sort: FindingSort, descending: boolean): Row[] {
  const direction = descending ? -1 : 1;
  const primary = (a: Row, b: Row): number => {
    if (sort === "severity") return severityRank(a.severity) - severityRank(b.severity);
    if (sort === "device") return a.deviceName.localeCompare(b.deviceName);
    return a.code.localeCompare(b.code);
  };
  return [...rows].sort(
    (a, b) => direction * primary(a, b) || severityRank(b.severity) - severityRank(a.severity) || a.deviceName.localeCompare(b.deviceName) || a.title.localeCompare(b.title),
  );
}

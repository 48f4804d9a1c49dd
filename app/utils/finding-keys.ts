// The fleet findings page's URL query, filters and order. The finding key and the severity
// helpers they build on live in the engine (server/engine/finding-keys.ts, vocabulary.ts).
import { FINDING_CODE_PATTERN } from "#server/engine/finding-keys";
import { isSeverity, SEVERITIES, severityRank, type Severity } from "#server/engine/vocabulary";
import { uuidOrEmpty } from "#server/validation/ids";

export const FINDING_SORTS = ["severity", "device", "code"] as const;
export type FindingSort = (typeof FINDING_SORTS)[number];

/** How the page groups its rows: under each check, under each device, or one list. */
export const FINDING_GROUPS = ["code", "device", "none"] as const;
export type FindingGroupBy = (typeof FINDING_GROUPS)[number];

/** The fleet findings page's filters and order, all in the URL so a view can be shared. */
export type FindingsQuery = {
  /** Show findings at this severity or above ("" = all). */
  minSeverity: Severity | "";
  code: string;
  site: string;
  device: string;
  showDismissed: boolean;
  /** Only findings whose dismissal awaits the viewer's confirmation (asked for by someone else). */
  awaitingMine: boolean;
  sort: FindingSort;
  descending: boolean;
  /** Grouping, "code" unless the URL says otherwise: a fleet has the same few problems on many devices. */
  group: FindingGroupBy;
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
    code: FINDING_CODE_PATTERN.test(code) ? code : "",
    site: uuidOrEmpty(params.get("site")),
    device: uuidOrEmpty(params.get("device")),
    showDismissed: params.get("dismissed") === "show",
    awaitingMine: params.get("awaiting") === "mine",
    sort,
    // Severity reads naturally worst-first; the other columns A→Z.
    descending: params.has("dir") ? params.get("dir") === "desc" : sort === "severity",
    group: FINDING_GROUPS.find((candidate) => candidate === params.get("group")) ?? "code",
  };
}

/** `awaitsMyConfirmation`: its dismissal waits for a second person, and the viewer may be that person. */
export type FindingRowLike = { severity: string; code: string; deviceName: string; siteId: string; deviceId: string; title: string; dismissed: boolean; awaitsMyConfirmation?: boolean };

/** Rows that pass the filters (the severity threshold is inclusive). */
export function filterFindingRows<Row extends FindingRowLike>(rows: readonly Row[], query: FindingsQuery): Row[] {
  const threshold = query.minSeverity ? severityRank(query.minSeverity) : -1;
  return rows.filter(
    (row) =>
      severityRank(row.severity) >= threshold &&
      (!query.code || row.code === query.code) &&
      (!query.site || row.siteId === query.site) &&
      (!query.device || row.deviceId === query.device) &&
      (query.showDismissed || !row.dismissed) &&
      (!query.awaitingMine || row.awaitsMyConfirmation === true),
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

export type FindingGroup<Row> = {
  /** The check's code or the device's id; "" for the one group of an ungrouped list. */
  key: string;
  rows: Row[];
  /** The worst severity among the group's active rows (all rows when every one is dismissed). */
  worst: Severity;
  active: number;
};

/**
 * Rows under their check or device, each group keeping the rows' order. Groups with active
 * findings come first, the worst first, then by name; a group of dismissed rows only comes last.
 */
export function groupFindingRows<Row extends FindingRowLike>(rows: readonly Row[], by: FindingGroupBy): FindingGroup<Row>[] {
  const groups = new Map<string, Row[]>();
  for (const row of rows) {
    const key = by === "code" ? row.code : by === "device" ? row.deviceId : "";
    groups.set(key, [...(groups.get(key) ?? []), row]);
  }
  const worstOf = (members: readonly Row[]): Severity => {
    const counted = members.some((row) => !row.dismissed) ? members.filter((row) => !row.dismissed) : members;
    const ranks = counted.map((row) => (isSeverity(row.severity) ? severityRank(row.severity) : 0));
    return SEVERITIES[Math.max(0, ...ranks)];
  };
  const nameOf = (group: FindingGroup<Row>) => (by === "device" ? group.rows[0].deviceName : group.key);
  return [...groups.entries()]
    .map(([key, members]) => ({ key, rows: members, worst: worstOf(members), active: members.filter((row) => !row.dismissed).length }))
    .sort((a, b) => Number(b.active > 0) - Number(a.active > 0) || severityRank(b.worst) - severityRank(a.worst) || nameOf(a).localeCompare(nameOf(b)));
}

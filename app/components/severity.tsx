import { isSeverity, SEVERITIES, type Severity } from "#server/engine/vocabulary";
import { cx } from "./ui/cx";
import { formatNumber } from "#server/engine/format";

/** Most severe first, as lists of findings read. */
export const SEVERITY_ORDER: readonly Severity[] = [...SEVERITIES].reverse();

export const SEVERITY_TONES: Record<Severity, string> = {
  // The surface colour is white in light mode and near-black in dark mode, like the danger fill's contrast needs (a dark: variant would miss the system theme).
  critical: "bg-danger text-surface",
  high: "bg-danger-soft text-danger border border-danger/40",
  medium: "bg-warning-soft text-warning border border-warning/40",
  low: "bg-info-soft text-info border border-info/30",
  info: "bg-surface-sunken text-ink-muted border border-line",
};

/** Findings counts by severity as small labelled counters; zero counts are left out. */
export function SeverityCounts({ counts }: { counts: Record<string, number> }) {
  const present = SEVERITY_ORDER.filter((severity) => (counts[severity] ?? 0) > 0);
  if (present.length === 0) return <span className="text-xs text-ink-faint">none</span>;
  return (
    <span className="flex flex-wrap gap-1">
      {present.map((severity) => (
        <span key={severity} className={cx("inline-flex items-center rounded px-1.5 py-0.5 text-xs font-medium", SEVERITY_TONES[severity])}>
          {formatNumber(counts[severity] ?? 0)} {severity}
        </span>
      ))}
    </span>
  );
}

export function SeverityBadge({ severity }: { severity: string }) {
  return <span className={cx("inline-flex items-center rounded px-1.5 py-0.5 text-xs font-semibold uppercase tracking-wide", SEVERITY_TONES[isSeverity(severity) ? severity : "info"])}>{severity}</span>;
}

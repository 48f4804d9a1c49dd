import { cx } from "#app/components/ui/cx";
import type { DocumentChange } from "#server/workspace/index";

/** A model's readable changes, element by element, as the history compares two revisions. */
export function DocumentChanges({ changes, className }: { changes: readonly DocumentChange[]; className?: string }) {
  return (
    <ul className={cx("space-y-2 text-sm", className)}>
      {changes.map((change, index) => (
        <li key={index} className="border-l-2 border-line-strong pl-3">
          <span className="font-medium">{change.section}</span> · {change.change} <code>{change.element}</code>
          {change.details.length > 0 ? (
            <ul className="mt-1 font-mono text-xs break-words text-ink-muted">
              {change.details.map((detail, detailIndex) => (
                <li key={detailIndex}>{detail}</li>
              ))}
            </ul>
          ) : null}
        </li>
      ))}
    </ul>
  );
}

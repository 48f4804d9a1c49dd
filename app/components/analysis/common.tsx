import type { ReactNode } from "react";
import { Link } from "react-router";
import { formatCount } from "#server/engine/format";

/**
 * The §8 caution, once per page that shows simulated results: the device workspace shows it
 * at its foot (the device layout), the fleet findings page at its own.
 */
export function SimulationCaution({ children }: { children?: ReactNode }) {
  return (
    <p role="note" data-testid="simulation-caution" className="rounded-control border border-warning/40 bg-warning-soft px-3 py-2 text-sm text-warning">
      The simulation models the configuration, not the device: confirm on the device in a maintenance window, and follow your change policy and the device maker's documentation.
      {children ? <> {children}</> : null}
    </p>
  );
}

/** A count, readable ("3.70 billion"), with the exact decimal in the tooltip and for screen readers. */
export function Count({ value, unit = "addresses" }: { value: string | bigint | number; unit?: string }) {
  const { text, exact } = formatCount(value);
  if (text === exact) return <span className="tabular">{text}</span>;
  return (
    <span className="tabular" title={`${exact} ${unit}`}>
      <span aria-hidden="true">{text}</span>
      <span className="sr-only">{exact}</span>
    </span>
  );
}

/** Previous / next links for a paged list; the page lives in the URL under `param`. */
export function Pager({ param, page, pages, search, label }: { param: string; page: number; pages: number; search: URLSearchParams; label: string }) {
  if (pages <= 1) return null;
  const link = (target: number) => {
    const next = new URLSearchParams(search);
    next.set(param, String(target));
    return `?${next.toString()}`;
  };
  const linkClass = "rounded-control border border-line-strong bg-surface px-3 py-1 text-sm hover:bg-surface-sunken";
  return (
    <nav aria-label={label} className="mt-3 flex items-center gap-3 text-sm">
      {page > 1 ? (
        <Link to={link(page - 1)} className={linkClass} rel="prev" preventScrollReset>
          Previous
        </Link>
      ) : null}
      <span className="text-ink-muted">
        Page {page} of {pages}
      </span>
      {page < pages ? (
        <Link to={link(page + 1)} className={linkClass} rel="next" preventScrollReset>
          Next
        </Link>
      ) : null}
    </nav>
  );
}

import type { ReactNode } from "react";

/** A calm panel for "nothing here yet" and "coming" pages: what it is, why empty, what to do. */
export function EmptyState({ icon, title, children, action }: { icon?: ReactNode; title: string; children?: ReactNode; action?: ReactNode }) {
  return (
    <div className="flex flex-col items-center rounded-card border border-dashed border-line-strong bg-surface px-6 py-14 text-center">
      {icon ? <div className="mb-4 text-harbour" aria-hidden="true">{icon}</div> : null}
      <h2 className="text-lg font-semibold text-ink">{title}</h2>
      {children ? <div className="mt-2 max-w-lg text-sm text-ink-muted">{children}</div> : null}
      {action ? <div className="mt-6">{action}</div> : null}
    </div>
  );
}

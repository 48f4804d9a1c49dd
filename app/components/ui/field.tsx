import { useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes } from "react";
import { cx } from "./cx";

const controlClasses =
  "block w-full rounded-control border bg-surface px-3 h-10 text-sm text-ink placeholder:text-ink-faint shadow-card focus:outline-none focus:ring-2 focus:ring-brass/60";

type FieldFrameProps = { label: string; error?: string; hint?: ReactNode; children: (ids: { id: string; describedBy?: string }) => ReactNode };

function FieldFrame({ label, error, hint, children }: FieldFrameProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(" ") || undefined;
  return (
    <div className="space-y-1.5">
      <label htmlFor={id} className="block text-sm font-medium text-ink">
        {label}
      </label>
      {children({ id, describedBy })}
      {hint ? (
        <p id={hintId} className="text-xs text-ink-muted">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={errorId} className="text-sm text-danger" role="alert">
          {error}
        </p>
      ) : null}
    </div>
  );
}

export function TextField({ label, error, hint, className, ...props }: InputHTMLAttributes<HTMLInputElement> & { label: string; error?: string; hint?: ReactNode }) {
  return (
    <FieldFrame label={label} error={error} hint={hint}>
      {({ id, describedBy }) => (
        <input id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={cx(controlClasses, error ? "border-danger" : "border-line-strong", className)} {...props} />
      )}
    </FieldFrame>
  );
}

export function SelectField({ label, error, hint, className, children, ...props }: SelectHTMLAttributes<HTMLSelectElement> & { label: string; error?: string; hint?: ReactNode }) {
  return (
    <FieldFrame label={label} error={error} hint={hint}>
      {({ id, describedBy }) => (
        <select id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={cx(controlClasses, "pr-8", error ? "border-danger" : "border-line-strong", className)} {...props}>
          {children}
        </select>
      )}
    </FieldFrame>
  );
}

/** One option per word of a vocabulary, each showing the word itself. */
export function WordOptions({ words }: { words: readonly string[] }) {
  return words.map((word) => (
    <option key={word} value={word}>
      {word}
    </option>
  ));
}

/**
 * One option per word, in the order the labels are written. Keyed by the vocabulary's type
 * (`Record<RuleAction, string>`), so a new word fails typecheck until it has its wording.
 */
export function LabelledOptions<Word extends string>({ labels }: { labels: Record<Word, string> }) {
  return Object.entries<string>(labels).map(([word, label]) => (
    <option key={word} value={word}>
      {label}
    </option>
  ));
}

/** The form-level message shown above the fields when an action refuses the whole form. */
export function FormError({ message }: { message?: string | null }) {
  if (!message) return null;
  return (
    <div role="alert" className="rounded-control border border-danger/40 bg-danger-soft px-3 py-2 text-sm text-danger">
      {message}
    </div>
  );
}

/** A field's hint and error lines, with the ids its control's aria-describedby names (`${id}-hint`, `${id}-error`). */
export function FieldNotes({ id, hint, error }: { id: string; hint?: ReactNode; error?: string }) {
  return (
    <>
      {hint ? (
        <p id={`${id}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-sm text-danger">
          {error}
        </p>
      ) : null}
    </>
  );
}

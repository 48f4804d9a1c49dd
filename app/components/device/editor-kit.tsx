import { useId, type ReactNode } from "react";
import { Form, Link, useNavigation, useSearchParams } from "react-router";
import { Button } from "../ui/button";
import { Card } from "../ui/card";
import { FieldNotes, FormError } from "../ui/field";
import { namesIn } from "#server/workspace/name-lists";

export type EditorProps = {
  baseRevision: number;
  canEdit: boolean;
  editing: string | null;
  errors: Record<string, string>;
  values: Record<string, string>;
};

/** The submitted values for this form (after a refusal), else nothing: other forms keep their own. */
export function valuesFor(props: EditorProps, intent: string): { values: Record<string, string>; errors: Record<string, string> } {
  return props.values.intent === intent ? { values: props.values, errors: props.errors } : { values: {}, errors: {} };
}

/** A form of the device editor: carries the revision it was based on, for the conflict check. */
export function EditorForm({ intent, baseRevision, children, className, label }: { intent: string; baseRevision: number; children: ReactNode; className?: string; label?: string }) {
  const [searchParams] = useSearchParams();
  return (
    // Keyed by the revision: after a saved change the form starts empty again; after a
    // refusal (same revision) it keeps what was typed. And by the element being edited
    // (`?edit=`): a select keeps its first selection when only its defaultValue changes, so
    // without a fresh form "Edit rule r-drop" would show (and save) the previous element's action.
    <Form key={`${intent}-${baseRevision}-${searchParams.get("edit") ?? ""}`} method="post" className={className} noValidate aria-label={label} preventScrollReset>
      <input type="hidden" name="intent" value={intent} />
      <input type="hidden" name="baseRevision" value={baseRevision} />
      {children}
    </Form>
  );
}

export function SaveButton({ children = "Save" }: { children?: ReactNode }) {
  const navigation = useNavigation();
  return (
    <Button type="submit" disabled={navigation.state === "submitting"}>
      {children}
    </Button>
  );
}

/** A small inline form with one button, e.g. delete or duplicate. */
export function ActionButton({
  intent,
  baseRevision,
  fields,
  label,
  variant = "ghost",
  accessibleLabel,
  disabled,
}: {
  intent: string;
  baseRevision: number;
  fields: Record<string, string>;
  label: string;
  variant?: "ghost" | "ghost-danger" | "secondary";
  accessibleLabel?: string;
  disabled?: boolean;
}) {
  return (
    <EditorForm intent={intent} baseRevision={baseRevision} className="inline">
      {Object.entries(fields).map(([name, value]) => (
        <input key={name} type="hidden" name={name} value={value} />
      ))}
      <Button type="submit" size="sm" variant={variant} aria-label={accessibleLabel} disabled={disabled}>
        {label}
      </Button>
    </EditorForm>
  );
}

export function TextAreaField({ label, name, defaultValue, error, hint, rows = 3 }: { label: string; name: string; defaultValue?: string; error?: string; hint?: ReactNode; rows?: number }) {
  const id = useId();
  return (
    <div className="space-y-1.5">
      <label htmlFor={id} className="block text-sm font-medium">
        {label}
      </label>
      <textarea
        id={id}
        name={name}
        rows={rows}
        defaultValue={defaultValue}
        aria-invalid={error ? true : undefined}
        aria-describedby={[hint ? `${id}-hint` : "", error ? `${id}-error` : ""].join(" ").trim() || undefined}
        className={`block w-full rounded-control border bg-surface px-3 py-2 font-mono text-sm shadow-card focus:ring-2 focus:ring-brass/60 focus:outline-none ${error ? "border-danger" : "border-line-strong"}`}
      />
      <FieldNotes id={id} hint={hint} error={error} />
    </div>
  );
}

export function CheckboxGroup({ legend, name, options, checked, error, hint }: { legend: string; name: string; options: Array<{ value: string; label: string }>; checked: string[]; error?: string; hint?: ReactNode }) {
  return (
    <fieldset className="space-y-1.5">
      <legend className="text-sm font-medium">{legend}</legend>
      <div className="flex flex-wrap gap-2">
        {options.map((option) => (
          <label key={option.value} className="inline-flex items-center gap-2 rounded-control border border-line bg-surface px-2.5 py-1.5 text-sm has-[:checked]:border-harbour has-[:checked]:bg-harbour-soft">
            <input type="checkbox" name={name} value={option.value} defaultChecked={checked.includes(option.value)} className="accent-[var(--color-harbour)]" />
            {option.label}
          </label>
        ))}
      </div>
      {hint ? <p className="text-xs text-ink-muted">{hint}</p> : null}
      {error ? (
        <p role="alert" className="text-sm text-danger">
          {error}
        </p>
      ) : null}
    </fieldset>
  );
}

/** The add/edit panel beside a section's list. */
export function EditorPanel({ title, children, cancel }: { title: string; children: ReactNode; cancel?: boolean }) {
  return (
    <Card className="p-5" id="edit">
      <div className="mb-4 flex items-center justify-between">
        <h2 className="text-sm font-semibold">{title}</h2>
        {cancel ? (
          <Link to="." className="text-sm text-ink-muted underline underline-offset-4" preventScrollReset>
            Cancel editing
          </Link>
        ) : null}
      </div>
      {children}
    </Card>
  );
}

export function FormMessage({ errors }: { errors: Record<string, string> }) {
  return <FormError message={errors.form} />;
}

/** Splits a list kept in a form value (one per line) or given as an array. */
export function listText(values: Record<string, string>, key: string, fallback: readonly string[] | undefined): string {
  return key in values ? values[key] : (fallback ?? []).join("\n");
}

/**
 * The names a picker starts from: what this form submitted when it was refused (a picker that
 * had nothing chosen submits no value at all), else the element's own.
 */
export function pickedNames(props: EditorProps, intent: string, key: string, fallback: readonly string[] | undefined): string[] {
  if (props.values.intent === intent) return namesIn(props.values[key] ?? "");
  return [...(fallback ?? [])];
}

export function checkedList(values: Record<string, string>, key: string, fallback: readonly string[] | undefined, submitted: boolean): string[] {
  if (submitted) return (values[key] ?? "").split("\n").filter(Boolean);
  return [...(fallback ?? [])];
}

export function NameHint({ label, names }: { label: string; names: string[] }) {
  if (names.length === 0) return null;
  return (
    <span>
      {label}: {names.map((name, index) => (
        <code key={name} className="mr-1">
          {name}
          {index < names.length - 1 ? "," : ""}
        </code>
      ))}
    </span>
  );
}

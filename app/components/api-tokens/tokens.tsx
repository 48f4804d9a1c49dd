import { useState, type ReactNode } from "react";
import { Form, Link } from "react-router";
import { TOKEN_LIFETIMES_DAYS } from "#models/api-token-words";
import { formatDuration } from "#server/engine/format";
import { Badge } from "#app/components/ui/card";
import { Button } from "#app/components/ui/button";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

/** A token as the account page and the organisation's settings list it. */
export type TokenListRow = {
  id: string;
  name: string;
  scope: "read" | "write";
  hint: string;
  expiresAt: string;
  lastUsedAt: string | null;
  lastUsedAddress: string;
  status: "active" | "expired" | "revoked";
  /** Where it acts: the organisation (account page) or the member and role (settings). */
  actsAs: string;
};

/** What the create form sends back once: the secret, never shown again. */
export type CreatedToken = { secret: string; name: string; organisation: string; scope: "read" | "write"; expiresAt: string };

export const SCOPE_LABELS = { read: "Read", write: "Read and write" } as const;

/** The scope and lifetime fields both token forms ask for, keeping what was chosen. */
function ScopeAndLifetimeFields({ values, errors }: { values: Record<string, string>; errors: Record<string, string> }) {
  return (
    <>
      <SelectField label="Scope" name="scope" defaultValue={values.scope ?? "read"} error={errors.scope}>
        <option value="read">{SCOPE_LABELS.read}</option>
        <option value="write">{SCOPE_LABELS.write}</option>
      </SelectField>
      <SelectField label="Expires in" name="lifetimeDays" defaultValue={values.lifetimeDays ?? "90"} error={errors.lifetimeDays}>
        {TOKEN_LIFETIMES_DAYS.map((days) => (
          <option key={days} value={days}>
            {formatDuration(days, "day")}
          </option>
        ))}
      </SelectField>
    </>
  );
}

/**
 * The form that makes a token — a personal one on the account page, a service one in Settings:
 * its name, who it acts as (`children`: the organisation, or the role, a field named
 * `actsAsField` whose own error makes the form's redundant), its scope and lifetime. A new
 * `resetKey` once a token is made starts the form empty again; what was typed stays after a refusal.
 */
export function CreateTokenForm({
  label,
  resetKey,
  values,
  errors,
  nameHint,
  actsAsField,
  submitLabel,
  busy,
  children,
}: {
  label: string;
  resetKey: string;
  values: Record<string, string>;
  errors: Record<string, string>;
  nameHint: string;
  actsAsField: string;
  submitLabel: string;
  busy: boolean;
  children: ReactNode;
}) {
  return (
    <Form key={resetKey} method="post" className="mt-4 grid gap-4 sm:grid-cols-2 lg:grid-cols-4 lg:items-start" noValidate aria-label={label}>
      <input type="hidden" name="intent" value="create-token" />
      <div className="sm:col-span-2 lg:col-span-4">
        <FormError message={errors.form && !errors.name && !errors[actsAsField] ? errors.form : null} />
      </div>
      <TextField label="Name" name="name" required maxLength={100} defaultValue={values.name} error={errors.name} hint={nameHint} />
      {children}
      <ScopeAndLifetimeFields values={values} errors={errors} />
      <div className="sm:col-span-2 lg:col-span-4">
        <Button type="submit" variant="secondary" disabled={busy}>
          {submitLabel}
        </Button>
      </div>
    </Form>
  );
}

/** The new token's secret, shown this once, with a button that copies it. */
export function NewTokenSecret({ created }: { created: CreatedToken }) {
  const [copied, setCopied] = useState<"" | "copied" | "failed">("");
  const copy = () => {
    navigator.clipboard.writeText(created.secret).then(
      () => setCopied("copied"),
      () => setCopied("failed"),
    );
  };
  return (
    <div role="status" className="mt-4 space-y-3 rounded-control border border-success/40 bg-success-soft p-4 text-sm" data-testid="new-token">
      <p className="font-medium text-ink">
        Your new token “{created.name}” for {created.organisation} ({SCOPE_LABELS[created.scope].toLowerCase()}, until <Time at={created.expiresAt} />).
      </p>
      <p className="text-ink-muted">Copy it now and keep it in your secret store: it is shown only this once. Sallyport keeps only a fingerprint of it.</p>
      <div className="flex flex-wrap items-center gap-2">
        <label htmlFor="new-token-secret" className="sr-only">
          The new token
        </label>
        <input id="new-token-secret" readOnly value={created.secret} onFocus={(event) => event.currentTarget.select()} className="h-10 min-w-0 flex-1 rounded-control border border-line-strong bg-surface px-3 font-mono text-xs text-ink" />
        <Button variant="secondary" onClick={copy}>
          Copy
        </Button>
      </div>
      {copied ? (
        <p className="text-xs text-ink-muted" aria-live="polite">
          {copied === "copied" ? "Copied." : "This browser did not allow copying: select the token and copy it yourself."}
        </p>
      ) : null}
    </div>
  );
}

const STATUS_TONES = { active: "success", expired: "neutral", revoked: "danger" } as const;
const STATUS_LABELS = { active: "Active", expired: "Expired", revoked: "Revoked" } as const;

/** The tokens with their last use and a Revoke button for each active one. */
export function TokenTable({ tokens, now, actsAsHeading, busy }: { tokens: readonly TokenListRow[]; now: string; actsAsHeading: string; busy: boolean }) {
  if (tokens.length === 0) return <p className="mt-4 text-sm text-ink-faint">No tokens yet.</p>;
  return (
    <div className="mt-4">
      <Table>
        <thead>
          <tr>
            <Th>Name</Th>
            <Th>{actsAsHeading}</Th>
            <Th>Scope</Th>
            <Th>Expires</Th>
            <Th>Last used</Th>
            <Th>Status</Th>
            <Th>
              <span className="sr-only">Revoke</span>
            </Th>
          </tr>
        </thead>
        <tbody>
          {tokens.map((token) => (
            <tr key={token.id} data-token={token.name}>
              <Td>
                <span className="font-medium">{token.name}</span>
                <span className="block font-mono text-xs text-ink-faint">{token.hint}…</span>
              </Td>
              <Td className="text-ink-muted">{token.actsAs}</Td>
              <Td>{SCOPE_LABELS[token.scope]}</Td>
              <Td className="text-ink-muted">
                <Time at={token.expiresAt} now={now} />
              </Td>
              <Td className="text-ink-muted">
                {token.lastUsedAt ? (
                  <>
                    <Time at={token.lastUsedAt} now={now} />
                    {token.lastUsedAddress ? <span className="block font-mono text-xs">{token.lastUsedAddress}</span> : null}
                  </>
                ) : (
                  "never"
                )}
              </Td>
              <Td>
                <Badge tone={STATUS_TONES[token.status]}>{STATUS_LABELS[token.status]}</Badge>
              </Td>
              <Td>
                {token.status === "active" ? (
                  <Form method="post">
                    <input type="hidden" name="intent" value="revoke-token" />
                    <input type="hidden" name="tokenId" value={token.id} />
                    <Button type="submit" variant="ghost-danger" size="sm" disabled={busy} aria-label={`Revoke ${token.name}`}>
                      Revoke
                    </Button>
                  </Form>
                ) : null}
              </Td>
            </tr>
          ))}
        </tbody>
      </Table>
    </div>
  );
}

/** A line pointing at the API reference. */
export function ApiReferenceLink() {
  return (
    <Link to="/docs/api" className="font-medium text-harbour underline-offset-2 hover:underline">
      API reference
    </Link>
  );
}

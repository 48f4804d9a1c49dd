import { Form, Link, useNavigation } from "react-router";
import { ApiReferenceLink, CreateTokenForm, NewTokenSecret, TokenTable, type CreatedToken } from "#app/components/api-tokens/tokens";
import { PASSWORD_MIN_LENGTH } from "#server/auth/password-rules";
import type { AccountPageData } from "#server/http/account-page.server";
import { auditSentence } from "#app/utils/audit-words";
import { Button } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { FormError, SelectField, TextField } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";

/** What a refused form sends back (messages by field and what was typed, never passwords), or a token made just now. */
export type AccountFormResult = { errors: Record<string, string>; values: Record<string, string> } | { created: CreatedToken } | undefined;

type Intent = "name" | "email" | "password" | "create-token";

/** The messages and typed values for one of the forms, when it was the one refused. */
function resultFor(result: AccountFormResult, intent: Intent): { errors: Record<string, string>; values: Record<string, string> } {
  return result && "values" in result && result.values.intent === intent ? result : { errors: {}, values: {} };
}

/**
 * Your name, your sign-in e-mail, your password, your API tokens, where you are signed in and
 * what changed. `organisation` is the one whose shell the page is in (the token form's default).
 */
export function AccountSettings({ data, result, organisation }: { data: AccountPageData; result: AccountFormResult; organisation?: string }) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const name = resultFor(result, "name");
  const email = resultFor(result, "email");
  const password = resultFor(result, "password");
  const token = resultFor(result, "create-token");
  const created = result && "created" in result ? result.created : null;
  return (
    <>
      <PageHeader title="Your account" description="Your name, the e-mail address you sign in with, your password and second factor, your API tokens, and where you are signed in." />
      <div className="grid gap-6 lg:grid-cols-2">
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Name</h2>
          <p className="mt-1 text-sm text-ink-muted">Shown to the members of your organisations and in the audit log.</p>
          <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Change your name">
            <input type="hidden" name="intent" value="name" />
            <FormError message={name.errors.form && !name.errors.name ? name.errors.form : null} />
            <TextField label="Name" name="name" autoComplete="name" required maxLength={100} defaultValue={name.values.name ?? data.user.name} error={name.errors.name} />
            <Button type="submit" variant="secondary" disabled={busy}>
              Save name
            </Button>
          </Form>
        </Card>

        <Card className="p-5">
          <h2 className="text-sm font-semibold">E-mail</h2>
          <p className="mt-1 text-sm text-ink-muted">
            You sign in with <strong className="text-ink">{data.user.email}</strong>. A new address must be confirmed from a link we send to it; until then nothing changes.
          </p>
          {data.pendingEmail ? (
            <p className="mt-3 rounded-control border border-info/30 bg-info-soft px-3 py-2 text-sm text-info" role="status">
              Waiting for confirmation of <strong>{data.pendingEmail.newEmail}</strong>: the link expires <Time at={data.pendingEmail.expiresAt} now={data.now} />.
            </p>
          ) : null}
          <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Change your e-mail address">
            <input type="hidden" name="intent" value="email" />
            <FormError message={email.errors.form && !email.errors.newEmail && !email.errors.currentPassword ? email.errors.form : null} />
            <TextField label="New e-mail address" name="newEmail" type="email" autoComplete="email" required maxLength={254} defaultValue={email.values.newEmail} error={email.errors.newEmail} />
            <TextField label="Current password" name="currentPassword" type="password" autoComplete="current-password" required error={email.errors.currentPassword} />
            <Button type="submit" variant="secondary" disabled={busy}>
              Send confirmation link
            </Button>
          </Form>
        </Card>

        <Card className="p-5">
          <h2 className="text-sm font-semibold">Password</h2>
          <p className="mt-1 text-sm text-ink-muted">Changing it signs out every other browser signed in to this account; this one stays signed in.</p>
          <Form method="post" className="mt-4 space-y-4" noValidate aria-label="Change your password">
            <input type="hidden" name="intent" value="password" />
            {/* For password managers: which account this password belongs to. */}
            <input type="text" name="username" autoComplete="username" value={data.user.email} readOnly hidden />
            <FormError message={password.errors.form && !password.errors.newPassword && !password.errors.currentPassword ? password.errors.form : null} />
            <TextField label="Current password" name="currentPassword" type="password" autoComplete="current-password" required error={password.errors.currentPassword} />
            <TextField
              label="New password"
              name="newPassword"
              type="password"
              autoComplete="new-password"
              required
              minLength={PASSWORD_MIN_LENGTH}
              error={password.errors.newPassword}
              hint={`At least ${PASSWORD_MIN_LENGTH} characters; spaces and any characters welcome.`}
            />
            <Button type="submit" variant="secondary" disabled={busy}>
              Change password
            </Button>
          </Form>
        </Card>

        <Card className="p-5">
          <h2 className="text-sm font-semibold">Second factor</h2>
          <p className="mt-1 text-sm text-ink-muted">
            {data.secondFactor.enabled
              ? `On: signing in takes your password and a code from your authenticator app. Recovery codes left: ${data.secondFactor.recoveryCodesLeft}.`
              : "Off: your password alone signs you in. A code from an authenticator app as a second step keeps a leaked password from being enough."}
          </p>
          <Link to="/account/second-factor" className="mt-4 inline-block text-sm font-medium text-harbour underline underline-offset-4">
            {data.secondFactor.enabled ? "Manage the second factor" : "Set up a second factor"}
          </Link>
        </Card>

        <Card className="p-5">
          <h2 className="text-sm font-semibold">Recent account activity</h2>
          <p className="mt-1 text-sm text-ink-muted">Sign-ins and changes to this account, newest first. Changes inside an organisation are in its audit log.</p>
          {data.activity.length === 0 ? (
            <p className="mt-4 text-sm text-ink-faint">Nothing yet.</p>
          ) : (
            <ul className="mt-4 space-y-2 text-sm">
              {data.activity.map((event) => (
                <li key={event.id} className="flex flex-wrap justify-between gap-x-3 border-l-2 border-line-strong pl-3">
                  <span>{auditSentence({ action: event.action, targetName: null, changes: event.changes })}</span>
                  <span className="text-xs text-ink-muted">
                    <Time at={event.at} now={data.now} />
                    {event.clientAddress ? ` · ${event.clientAddress}` : ""}
                  </span>
                </li>
              ))}
            </ul>
          )}
        </Card>

        <Card className="p-5 lg:col-span-2">
          <h2 className="text-sm font-semibold" id="api-tokens">
            API tokens
          </h2>
          <p className="mt-1 text-sm text-ink-muted">
            A token lets a script or pipeline call the Sallyport API as you, with your role in one organisation. A read token only reads; a read and write token may also
            create devices and proposals. Keep tokens in a secret store and revoke any you no longer use. How to call the API: the <ApiReferenceLink />.
          </p>
          {created ? <NewTokenSecret created={created} /> : null}
          {data.tokenOrganisations.length === 0 ? (
            <p className="mt-4 text-sm text-ink-faint">Tokens act in an organisation: join or create one first.</p>
          ) : (
            <CreateTokenForm
              label="Create an API token"
              resetKey={created?.secret ?? "new"}
              values={token.values}
              errors={token.errors}
              nameHint="Where it is used, e.g. “nightly exposure check”."
              actsAsField="organisation"
              submitLabel="Create token"
              busy={busy}
            >
              <SelectField label="Organisation" name="organisation" defaultValue={token.values.organisation ?? organisation ?? data.tokenOrganisations[0].slug} error={token.errors.organisation}>
                {data.tokenOrganisations.map((choice) => (
                  <option key={choice.slug} value={choice.slug}>
                    {choice.name} (as {choice.role})
                  </option>
                ))}
              </SelectField>
            </CreateTokenForm>
          )}
          <TokenTable tokens={data.tokens.map((row) => ({ ...row, actsAs: row.organisation }))} now={data.now} actsAsHeading="Organisation" busy={busy} />
        </Card>

        <Card className="p-5 lg:col-span-2">
          <h2 className="text-sm font-semibold">Sessions</h2>
          <p className="mt-1 text-sm text-ink-muted">Every browser signed in to this account. Signing out everywhere ends them all, this one included.</p>
          <div className="mt-4">
            <Table>
              <thead>
                <tr>
                  <Th>Browser</Th>
                  <Th>Address</Th>
                  <Th>Last seen</Th>
                </tr>
              </thead>
              <tbody>
                {data.sessions.map((session) => (
                  <tr key={session.id}>
                    <Td className="max-w-xs truncate" title={session.userAgent}>
                      {session.current ? <strong>This browser · </strong> : null}
                      {session.userAgent || "unknown"}
                    </Td>
                    <Td className="text-ink-muted">{session.clientAddress}</Td>
                    <Td className="text-ink-muted">
                      <Time at={session.lastSeenAt} now={data.now} />
                    </Td>
                  </tr>
                ))}
              </tbody>
            </Table>
          </div>
          <Form method="post" action="/logout" className="mt-4">
            <input type="hidden" name="scope" value="everywhere" />
            <Button type="submit" variant="danger">
              Sign out everywhere
            </Button>
          </Form>
        </Card>
      </div>
    </>
  );
}

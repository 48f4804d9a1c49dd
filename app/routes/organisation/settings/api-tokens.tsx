import { data, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/api-tokens";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { PAGE_ROLES, roleRank } from "#server/auth/roles";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { ServiceTokenSchema, TokenIdSchema } from "#server/http/schemas";
import { createApiToken, listOrganisationTokens, revokeApiToken, SERVICE_TOKEN_ROLES } from "#server/services/api-tokens.server";
import { ApiReferenceLink, CreateTokenForm, NewTokenSecret, TokenTable, type CreatedToken } from "#app/components/api-tokens/tokens";
import { Card } from "#app/components/ui/card";
import { SelectField } from "#app/components/ui/field";

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Settings · Sallyport" }];

// The organisation's API tokens (docs/decisions/014): admins make service tokens, which act with
// a role chosen here (no higher than their own), and revoke any token of the organisation,
// members' personal ones included (when someone leaves, say).
export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context, PAGE_ROLES.apiTokens);
  const tokens = await listOrganisationTokens(access.organisation.id);
  return {
    tokens: tokens.map((token) => ({
      id: token.id,
      name: token.name,
      scope: token.scope,
      hint: token.hint,
      expiresAt: token.expiresAt,
      lastUsedAt: token.lastUsedAt,
      lastUsedAddress: token.lastUsedAddress,
      status: token.status,
      actsAs: token.kind === "service" ? `Service token, as ${token.role ?? "?"}` : `${token.owner?.name ?? "a former member"} (personal)`,
    })),
    roles: SERVICE_TOKEN_ROLES.filter((role) => roleRank(role) <= roleRank(access.role)),
    now: new Date().toISOString(),
  };
}

type ActionResult = { created: CreatedToken } | { errors: Record<string, string>; values: Record<string, string> };

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, PAGE_ROLES.apiTokens);
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  try {
    switch (values.intent) {
      case "create-token": {
        const parsed = ServiceTokenSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const { secret, token } = await createApiToken(access.organisation.id, { kind: "service", ...parsed.data }, { ...actor, userId: access.user.id });
        // Shown once, in this answer only.
        return data<ActionResult>({ created: { secret, name: token.name, organisation: token.organisation.name, scope: token.scope, expiresAt: token.expiresAt } }, { headers: { "Cache-Control": "no-store" } });
      }
      case "revoke-token": {
        const parsed = TokenIdSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const revoked = await revokeApiToken(parsed.data.tokenId, { ...actor, userId: access.user.id }, { organisationId: access.organisation.id, role: access.role });
        const message = revoked.changed ? `The token “${revoked.name}” is revoked: calls with it are refused from now on.` : `The token “${revoked.name}” was revoked already.`;
        return redirect(`/o/${access.organisation.slug}/settings/api-tokens`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

export default function ApiTokens({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const busy = navigation.state === "submitting";
  const created = actionData && "created" in actionData ? actionData.created : null;
  const failed = actionData && "values" in actionData && actionData.values.intent === "create-token" ? actionData : { errors: {} as Record<string, string>, values: {} as Record<string, string> };
  return (
    <div className="space-y-6">
      <Card className="p-5">
        <h2 className="text-sm font-semibold">Service tokens</h2>
        <p className="mt-1 max-w-3xl text-sm text-ink-muted">
          A service token belongs to the organisation, not to a person: a pipeline keeps working when someone leaves. It acts with the role you choose here, at most your own.
          Members make their own personal tokens on their account page. How to call the API: the <ApiReferenceLink />.
        </p>
        {created ? <NewTokenSecret created={created} /> : null}
        <CreateTokenForm
          label="Create a service token"
          resetKey={created?.secret ?? "new"}
          values={failed.values}
          errors={failed.errors}
          nameHint="The pipeline or system that uses it."
          actsAsField="role"
          submitLabel="Create service token"
          busy={busy}
        >
          <SelectField label="Acts as" name="role" defaultValue={failed.values.role ?? "trainee"} error={failed.errors.role}>
            {loaderData.roles.map((role) => (
              <option key={role} value={role}>
                {role}
              </option>
            ))}
          </SelectField>
        </CreateTokenForm>
      </Card>
      <Card className="p-5">
        <h2 className="text-sm font-semibold">Every token of this organisation</h2>
        <p className="mt-1 text-sm text-ink-muted">Service tokens and members’ personal tokens. Revoking one refuses its next call.</p>
        <TokenTable tokens={loaderData.tokens} now={loaderData.now} actsAsHeading="Acts as" busy={busy} />
      </Card>
    </div>
  );
}

import type { Route } from "./+types/account";
import { requireRole } from "#server/auth/guard.server";
import { accountAction, accountPageData } from "#server/http/account-page.server";
import { AccountSettings } from "#app/components/account/account-settings";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Sallyport" }];

// Inside the organisation's shell, so the navigation stays where it was. Any member may change their own account.
export async function loader({ context }: Route.LoaderArgs) {
  return accountPageData(requireRole(context));
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context);
  return accountAction(request, context, access, `/o/${access.organisation.slug}/account`);
}

export default function OrganisationAccount({ loaderData, actionData, params }: Route.ComponentProps) {
  return <AccountSettings data={loaderData} result={actionData} organisation={params.organisation} />;
}

// A throttled password check answers 429 with Retry-After (RFC 9110 §10.2.3) on the page itself.
export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}

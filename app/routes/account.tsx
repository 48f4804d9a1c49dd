import { useRouteLoaderData } from "react-router";
import type { Route } from "./+types/account";
import { requireSignedIn } from "#server/auth/guard.server";
import { accountAction, accountPageData } from "#server/http/account-page.server";
import { listOrganisationsOfUser } from "#server/services/organisations.server";
import { AccountSettings } from "#app/components/account/account-settings";
import { AppShell } from "#app/components/app-shell";
import { BrandHomeLink } from "#app/components/brand";
import type { loader as rootLoader } from "#app/root";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Sallyport" }];

// The account page, in the shell of the member's first organisation (inside an organisation
// the menu links to /o/:organisation/account, which keeps that one); bare for someone who is
// in no organisation yet.
export async function loader({ request, context }: Route.LoaderArgs) {
  const signedIn = requireSignedIn(context, request);
  const [data, organisations] = await Promise.all([accountPageData(signedIn), listOrganisationsOfUser(signedIn.user.id)]);
  return { ...data, organisations };
}

export async function action({ request, context }: Route.ActionArgs) {
  return accountAction(request, context, requireSignedIn(context, request), "/account");
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const rootData = useRouteLoaderData<typeof rootLoader>("root");
  const { organisations, ...data } = loaderData;
  const settings = <AccountSettings data={data} result={actionData} />;
  if (organisations[0]) {
    return (
      <AppShell organisation={organisations[0]} organisations={organisations} user={data.user} theme={rootData?.theme ?? "system"}>
        {settings}
      </AppShell>
    );
  }
  return (
    <main className="mx-auto max-w-5xl px-6 py-10">
      <BrandHomeLink className="mb-8" />
      {settings}
    </main>
  );
}

// A throttled password check answers 429 with Retry-After (RFC 9110 §10.2.3) on the page itself.
export function headers({ actionHeaders }: Route.HeadersArgs) {
  return actionHeaders;
}

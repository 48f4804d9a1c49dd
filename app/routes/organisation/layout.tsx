import { Outlet, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/layout";
import { organisationMiddleware, requireRole } from "#server/auth/guard.server";
import { listOrganisationsOfUser, organisationSummaries } from "#server/services/organisations.server";
import { AppShell } from "#app/components/app-shell";
import { ErrorPanel, StandaloneError } from "#app/components/error-panel";
import type { loader as rootLoader } from "#app/root";

// The member and their role in this organisation, resolved once per request for every route below.
export const middleware: Route.MiddlewareFunction[] = [organisationMiddleware];

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  return {
    organisation: { slug: access.organisation.slug, name: access.organisation.name, role: access.role },
    // Read with the session when the request began; read again after an action, which may have
    // renamed, joined or left one.
    organisations: request.method === "GET" ? organisationSummaries(access.memberships) : await listOrganisationsOfUser(access.user.id),
    user: { name: access.user.name, email: access.user.email },
  };
}

export default function OrganisationLayout({ loaderData }: Route.ComponentProps) {
  const rootData = useRouteLoaderData<typeof rootLoader>("root");
  return (
    <AppShell organisation={loaderData.organisation} organisations={loaderData.organisations} user={loaderData.user} theme={rootData?.theme ?? "system"}>
      <Outlet />
    </AppShell>
  );
}

/**
 * A page below refused or failed (a 403 for a role too low, a 404 inside the organisation): the
 * message shows inside the app's frame with its navigation and a way back. Pages whose actions
 * may refuse export `PageErrorBoundary` themselves, since after a refused action this layout's
 * data is not loaded; only when the organisation itself is not found does the bare page remain.
 */
export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const rootData = useRouteLoaderData<typeof rootLoader>("root");
  const shell = useRouteLoaderData<typeof loader>("routes/organisation/layout");
  if (!shell) return <StandaloneError error={error} />;
  return (
    <AppShell organisation={shell.organisation} organisations={shell.organisations} user={shell.user} theme={rootData?.theme ?? "system"}>
      <ErrorPanel error={error} home={{ to: `/o/${shell.organisation.slug}/devices`, label: "Back to devices" }} organisationName={shell.organisation.name} />
    </AppShell>
  );
}

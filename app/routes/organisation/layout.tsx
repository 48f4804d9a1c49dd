import { Outlet, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/layout";
import { organisationMiddleware, requireRole } from "#server/auth/guard.server";
import { listOrganisationsOfUser } from "#server/services/organisations.server";
import { AppShell } from "#app/components/app-shell";
import type { loader as rootLoader } from "#app/root";

// The member and their role in this organisation, resolved once per request for every route below.
export const middleware: Route.MiddlewareFunction[] = [organisationMiddleware];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  return {
    organisation: { slug: access.organisation.slug, name: access.organisation.name, role: access.role },
    organisations: await listOrganisationsOfUser(access.user.id),
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

import type { ReactNode } from "react";
import { NavLink, Outlet, useParams, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole, PAGE_ROLES } from "#server/auth/roles";
import { ErrorPanel } from "#app/components/error-panel";
import { PageHeader } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";

export async function loader({ context }: Route.LoaderArgs) {
  const { organisation, role } = requireRole(context);
  // Tabs the member's role may open; the audit log's guard reads the same table.
  const tabs = [
    { to: "members", label: "Members" },
    { to: "shared-objects", label: "Shared objects" },
    { to: "organisation", label: "Organisation" },
    ...(hasAtLeastRole(role, PAGE_ROLES.apiTokens) ? [{ to: "api-tokens", label: "API tokens" }] : []),
    ...(hasAtLeastRole(role, PAGE_ROLES.auditLog) ? [{ to: "audit", label: "Audit log" }] : []),
  ];
  return { slug: organisation.slug, tabs };
}

export default function SettingsLayout({ loaderData }: Route.ComponentProps) {
  return (
    <SettingsFrame frame={loaderData}>
      <Outlet />
    </SettingsFrame>
  );
}

/** A settings page refused (the audit log for a trainee, say): the message shows under the settings tabs. */
export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const frame = useRouteLoaderData<typeof loader>("routes/organisation/settings/layout");
  const params = useParams();
  const home = { to: `/o/${params.organisation ?? ""}/settings/members`, label: "Back to members" };
  // After a refused action the settings loader has not run: the message alone, still inside the app's frame.
  if (!frame) return <ErrorPanel error={error} home={home} />;
  return (
    <SettingsFrame frame={frame}>
      <ErrorPanel error={error} home={home} />
    </SettingsFrame>
  );
}

function SettingsFrame({ frame, children }: { frame: Route.ComponentProps["loaderData"]; children: ReactNode }) {
  return (
    <>
      <PageHeader title="Settings" description="Members and their roles, the organisation, its API tokens, and the record of every change." />
      <nav aria-label="Settings" className="mb-6 flex flex-wrap gap-1 border-b border-line">
        {frame.tabs.map((tab) => (
          <NavLink
            key={tab.to}
            to={`/o/${frame.slug}/settings/${tab.to}`}
            className={({ isActive }) => cx("-mb-px border-b-2 px-2 py-2 text-sm font-medium whitespace-nowrap sm:px-3", isActive ? "border-harbour text-harbour" : "border-transparent text-ink-muted hover:text-ink")}
          >
            {tab.label}
          </NavLink>
        ))}
      </nav>
      {children}
    </>
  );
}

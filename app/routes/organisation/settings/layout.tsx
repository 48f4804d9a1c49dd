import { NavLink, Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { requireRole } from "#server/auth/guard.server";
import { PageHeader } from "#app/components/ui/card";
import { cx } from "#app/components/ui/cx";

export async function loader({ context }: Route.LoaderArgs) {
  const { organisation } = requireRole(context);
  return { slug: organisation.slug };
}

export default function SettingsLayout({ loaderData }: Route.ComponentProps) {
  const tabs = [
    { to: "members", label: "Members" },
    { to: "shared-objects", label: "Shared objects" },
    { to: "organisation", label: "Organisation" },
    { to: "audit", label: "Audit log" },
  ];
  return (
    <>
      <PageHeader title="Settings" description="Members and their roles, the organisation, and the record of every change." />
      <nav aria-label="Settings" className="mb-6 flex gap-1 border-b border-line">
        {tabs.map((tab) => (
          <NavLink
            key={tab.to}
            to={`/o/${loaderData.slug}/settings/${tab.to}`}
            className={({ isActive }) => cx("-mb-px border-b-2 px-3 py-2 text-sm font-medium", isActive ? "border-harbour text-harbour" : "border-transparent text-ink-muted hover:text-ink")}
          >
            {tab.label}
          </NavLink>
        ))}
      </nav>
      <Outlet />
    </>
  );
}

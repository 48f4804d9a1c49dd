import { Link, NavLink, Outlet } from "react-router";
import type { Route } from "./+types/layout";
import { hasAtLeastRole } from "#server/auth/roles";
import { deviceMiddleware, requireDevice } from "#server/http/device-access.server";
import { buttonClasses } from "#app/components/ui/button";
import { cx } from "#app/components/ui/cx";
import { DEVICE_SECTIONS, SECTION_TITLES } from "#app/components/device/sections";
import { SimulationCaution } from "#app/components/analysis/common";

// The device in the URL at its current revision, resolved once per request for every route below.
export const middleware: Route.MiddlewareFunction[] = [deviceMiddleware];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  return {
    slug: access.organisation.slug,
    device: { id: access.device.id, name: access.device.name, siteName: access.device.site?.name ?? "", revision: access.revision.number },
    canEdit: hasAtLeastRole(access.role, "engineer"),
  };
}

export default function DeviceLayout({ loaderData }: Route.ComponentProps) {
  const { slug, device } = loaderData;
  const base = `/o/${slug}/devices/${device.id}`;
  const tab = ({ isActive }: { isActive: boolean }) =>
    cx("-mb-px border-b-2 px-2.5 py-2 text-sm font-medium whitespace-nowrap", isActive ? "border-harbour text-harbour" : "border-transparent text-ink-muted hover:text-ink");
  return (
    <>
      <nav aria-label="Breadcrumb" className="mb-2 text-sm text-ink-muted">
        <Link to={`/o/${slug}/devices`} className="underline-offset-4 hover:underline">
          Devices
        </Link>{" "}
        / {device.siteName}
      </nav>
      <div className="mb-4 flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="font-mono text-display">{device.name}</h1>
          <p className="mt-1 text-sm text-ink-muted">
            Current revision <strong className="tabular text-ink">r{device.revision}</strong>
          </p>
        </div>
        <a href={`${base}/revisions/${device.revision}/export`} className={buttonClasses("secondary", "sm")} download>
          Export model (JSON)
        </a>
      </div>
      <nav aria-label="Device" className="mb-6 flex gap-1 overflow-x-auto border-b border-line">
        <NavLink to={base} end className={tab}>
          Overview
        </NavLink>
        <NavLink to={`${base}/analysis`} className={tab}>
          Trace
        </NavLink>
        <NavLink to={`${base}/reach`} className={tab}>
          Reach
        </NavLink>
        <NavLink to={`${base}/exposure`} className={tab}>
          Exposure map
        </NavLink>
        {DEVICE_SECTIONS.map((section) => (
          <NavLink key={section} to={`${base}/model/${section}`} className={tab}>
            {SECTION_TITLES[section]}
          </NavLink>
        ))}
        <NavLink to={`${base}/history`} className={tab}>
          History
        </NavLink>
      </nav>
      <Outlet />
      {/* Once per page, at the foot of the workspace: every tab shows simulated results. */}
      <footer className="mt-10">
        <SimulationCaution />
      </footer>
    </>
  );
}

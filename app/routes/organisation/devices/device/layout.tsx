import type { ReactNode } from "react";
import { Link, Outlet, useParams, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/layout";
import { hasAtLeastRole } from "#server/auth/roles";
import { deviceMiddleware, requireDevice } from "#server/http/device-access.server";
import { buttonClasses } from "#app/components/ui/button";
import { SimulationCaution } from "#app/components/analysis/common";
import { DeviceNav } from "#app/components/device/device-nav";
import { ErrorPanel } from "#app/components/error-panel";

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

type DeviceFrameData = Route.ComponentProps["loaderData"];

export default function DeviceLayout({ loaderData }: Route.ComponentProps) {
  return (
    <DeviceFrame frame={loaderData}>
      <Outlet />
    </DeviceFrame>
  );
}

/** A device page refused or failed: the message shows under the device's name and navigation. */
export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const frame = useRouteLoaderData<typeof loader>("routes/organisation/devices/device/layout");
  const params = useParams();
  if (!frame) return <ErrorPanel error={error} home={{ to: `/o/${params.organisation ?? ""}/devices`, label: "Back to devices" }} />;
  return (
    <DeviceFrame frame={frame}>
      <ErrorPanel error={error} home={{ to: `/o/${frame.slug}/devices/${frame.device.id}`, label: `Back to ${frame.device.name}` }} />
    </DeviceFrame>
  );
}

function DeviceFrame({ frame, children }: { frame: DeviceFrameData; children: ReactNode }) {
  const { slug, device } = frame;
  const base = `/o/${slug}/devices/${device.id}`;
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
          <h1 className="font-mono text-display break-all">{device.name}</h1>
          <p className="mt-1 text-sm text-ink-muted">
            Current revision <strong className="tabular text-ink">r{device.revision}</strong>
          </p>
        </div>
        <a href={`${base}/revisions/${device.revision}/export`} className={buttonClasses("secondary", "sm")} download>
          Export model (JSON)
        </a>
      </div>
      <DeviceNav base={base} />
      {children}
      {/* Once per page, at the foot of the workspace: every tab shows simulated results. */}
      <footer className="mt-10">
        <SimulationCaution />
      </footer>
    </>
  );
}

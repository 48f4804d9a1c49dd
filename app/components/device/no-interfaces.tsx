import { useRouteLoaderData } from "react-router";
import type { loader as deviceLoader } from "#app/routes/organisation/devices/device/layout";
import { ButtonLink } from "#app/components/ui/button";
import { EmptyState } from "#app/components/ui/empty-state";

/**
 * What an analysis page shows for a device with no interface yet: probes arrive on an
 * interface, so there is nothing to answer — and the way on is the interfaces editor.
 */
export function NoInterfacesYet({ page }: { page: string }) {
  const frame = useRouteLoaderData<typeof deviceLoader>("routes/organisation/devices/device/layout");
  const editor = frame ? `/o/${frame.slug}/devices/${frame.device.id}/model/interfaces` : "../model/interfaces";
  return (
    <EmptyState title="This device has no interfaces yet" action={<ButtonLink to={editor}>{frame?.canEdit ? "Add the first interface" : "Open the interfaces"}</ButtonLink>}>
      {page} needs at least one interface with an address: every probe arrives on one.
      {frame?.canEdit ? "" : " An engineer, admin or owner adds them."}
    </EmptyState>
  );
}

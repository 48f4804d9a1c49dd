import type { Route } from "./+types/devices";
import { requireMember } from "../../../server/auth/guard.server";
import { ComingSoon } from "~/components/coming-soon";

export const meta: Route.MetaFunction = () => [{ title: "Devices · Sallyport" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireMember(request, params.organisation);
  return null;
}

export default function Devices() {
  return (
    <ComingSoon
      title="Devices"
      description="Each device's management plane: interfaces, listeners, accounts, login sources, second factor and inbound rules."
      what="The device workspace is being built: store, edit, import and export device models, with revisions. Until it lands there are no devices to show."
    />
  );
}

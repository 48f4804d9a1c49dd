import type { Route } from "./+types/findings";
import { requireMember } from "../../../server/auth/guard.server";
import { ComingSoon } from "~/components/coming-soon";

export const meta: Route.MetaFunction = () => [{ title: "Findings · Sallyport" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireMember(request, params.organisation);
  return null;
}

export default function Findings() {
  return (
    <ComingSoon
      title="Findings"
      description="Hardening checks across the fleet, each with its severity, the affected elements, why it matters and its published source."
      what="Findings appear here once devices are modelled. Nothing is shown until then rather than invented results."
    />
  );
}

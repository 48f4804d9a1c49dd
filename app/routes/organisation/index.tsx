import { redirect } from "react-router";
import type { Route } from "./+types/index";
import { requireMember } from "#server/auth/guard.server";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { organisation } = await requireMember(request, params.organisation);
  throw redirect(`/o/${organisation.slug}/devices`);
}

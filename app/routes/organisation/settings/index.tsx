import { redirect } from "react-router";
import type { Route } from "./+types/index";
import { requireRole } from "#server/auth/guard.server";

export async function loader({ context }: Route.LoaderArgs) {
  const { organisation } = requireRole(context);
  throw redirect(`/o/${organisation.slug}/settings/members`);
}

import { data } from "react-router";
import type { Route } from "./+types/not-found";
import { requireRole } from "#server/auth/guard.server";
import { PageErrorBoundary } from "#app/components/error-panel";

// An address inside the organisation that no page answers: a 404 inside the app's frame, with
// the navigation and a way back (outsiders get the organisation's own bare 404 first).
export const ErrorBoundary = PageErrorBoundary;

export async function loader({ context }: Route.LoaderArgs) {
  requireRole(context);
  throw data({ message: "There is no such page in this organisation. The navigation lists the ones there are." }, { status: 404 });
}

export async function action({ context }: Route.ActionArgs) {
  requireRole(context);
  throw data({ message: "There is no such page in this organisation." }, { status: 404 });
}

export default function OrganisationNotFound() {
  return null;
}

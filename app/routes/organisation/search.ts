import { redirect } from "react-router";
import type { Route } from "./+types/search";
import { requireRole } from "#server/auth/guard.server";
import { looksLikeSource } from "#app/utils/search";

// The app shell's search box: an address or CIDR block opens fleet reach for it (which says
// what is wrong with a malformed one); anything else searches the fleet table by device or
// site name. A GET, so it works without JavaScript and the result is a linkable page.
export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const q = (new URL(request.url).searchParams.get("q") ?? "").trim().slice(0, 100);
  const base = `/o/${access.organisation.slug}`;
  if (q === "") return redirect(`${base}/devices`);
  if (looksLikeSource(q)) return redirect(`${base}/reach?${new URLSearchParams({ from: q }).toString()}`);
  return redirect(`${base}/devices?${new URLSearchParams({ q }).toString()}`);
}

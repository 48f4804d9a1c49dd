import { data, redirect } from "react-router";
import type { Route } from "./+types/theme";
import { safeRedirectPath } from "#server/auth/session.server";
import { readForm } from "#server/http/form.server";
import { serializeTheme, THEMES } from "#server/http/theme.server";

export async function loader() {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  const form = await readForm(request);
  const theme = THEMES.find((candidate) => candidate === form.get("theme"));
  if (!theme) throw data({ message: `Choose a theme: ${THEMES.join(", ")}.` }, { status: 400 });
  throw redirect(safeRedirectPath(form.get("returnTo")), { headers: { "Set-Cookie": await serializeTheme(theme) } });
}

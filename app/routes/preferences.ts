import { data, redirect } from "react-router";
import type { Route } from "./+types/preferences";
import { safeRedirectPath } from "#server/auth/session.server";
import { readForm } from "#server/http/form.server";
import { RULE_VIEWS, serializeRuleView } from "#server/http/preferences.server";

// Display preferences remembered in a cookie, like the theme: posted by a plain form, so they
// work without JavaScript, then back to the page that asked.
export async function loader() {
  throw redirect("/");
}

export async function action({ request }: Route.ActionArgs) {
  const form = await readForm(request);
  const view = RULE_VIEWS.find((candidate) => candidate === form.get("ruleView"));
  if (!view) throw data({ message: `Choose a rule view: ${RULE_VIEWS.join(", ")}.` }, { status: 400 });
  throw redirect(safeRedirectPath(form.get("returnTo")), { headers: { "Set-Cookie": await serializeRuleView(view) } });
}

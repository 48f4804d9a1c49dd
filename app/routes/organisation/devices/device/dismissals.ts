import { data, redirect } from "react-router";
import type { Route } from "./+types/dismissals";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedWith } from "#server/http/refusals.server";
import { dismissalReasonSchema } from "#server/http/schemas";
import { confirmDismissal, declineDismissal, dismissalRuleFor, dismissFinding, restoreFinding } from "#server/services/findings.server";
import { CONFIRM_ROLE, DISMISS_ROLE } from "#server/services/dismissal-rules";
import { parseFindingKey } from "#server/engine/finding-keys";
import { clientAddressOf } from "#server/http/request-context.server";

const INTENTS = ["dismiss", "restore", "confirm", "decline"] as const;
type Intent = (typeof INTENTS)[number];
const isIntent = (value: string | undefined): value is Intent => (INTENTS as readonly string[]).includes(value ?? "");

/** The refusal the overview's and the findings page's forms show beside their field, with what was typed. */
function refusedBody(key: string, errors: Record<string, string>, values: Record<string, string>) {
  return { ok: false as const, key, errors, values: { reason: values.reason ?? "" } };
}

function refused(status: 400, key: string, errors: Record<string, string>, values: Record<string, string>) {
  return data(refusedBody(key, errors, values), { status });
}

/**
 * Where to go after the change: the page the form was on (the fleet findings page sends its own
 * address with its filters) when it is a page of this organisation, else the device overview.
 */
function returnPath(requested: string | undefined, slug: string, overview: string): string {
  if (!requested || requested.length > 1000 || !requested.startsWith(`/o/${slug}/`) || !/^[!-~]+$/.test(requested) || /\/\/|\\/.test(requested)) return overview;
  return requested;
}

// Posts only: the overview and the findings page show the findings; this address has nothing to show on its own.
export async function loader({ context }: Route.LoaderArgs) {
  requireDevice(context);
  throw data({ message: "Dismissals are changed from the device overview or the findings page (POST only)." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request, context }: Route.ActionArgs) {
  // The least role of any intent here; asking for, withdrawing and restoring need more (below).
  let access = requireDevice(context, CONFIRM_ROLE);
  const values = formValues(await readForm(request));
  const intent = values.intent;
  if (!isIntent(intent)) return unknownIntent(intent);
  if (intent === "dismiss" || intent === "restore") access = requireDevice(context, DISMISS_ROLE);
  const key = values.key ?? "";
  if (!parseFindingKey(key)) return refused(400, key, { form: "That does not name a finding. Reload the page and try again." }, values);
  const overview = `/o/${access.organisation.slug}/devices/${access.device.id}`;
  const back = returnPath(values.returnTo, access.organisation.slug, overview);
  const actor = actorOf(access, clientAddressOf(context));
  const done = async (message: string) => redirect(back, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    if (intent === "dismiss") {
      // The finding's severity decides how long the reason must be (and a lockout is refused, 403).
      const reason = dismissalReasonSchema(dismissalRuleFor(access, key)).safeParse(values.reason ?? "");
      if (!reason.success) return refused(400, key, { reason: reason.error.issues[0]?.message ?? "Enter a reason." }, values);
      const outcome = await dismissFinding(access, key, reason.data, actor);
      throw await done(
        outcome.state === "awaiting-confirmation"
          ? `Asked to dismiss “${outcome.title}”. It still counts until a second person (a reviewer or above) confirms the dismissal.`
          : `Dismissed “${outcome.title}”. The device is unchanged; restore the finding when the reason no longer holds.`,
      );
    }
    if (intent === "confirm") {
      const confirmed = await confirmDismissal(access, key, actor);
      throw await done(`Confirmed the dismissal of “${confirmed.title}”: it is an accepted risk now and leaves the counts.`);
    }
    if (intent === "decline") {
      const declined = await declineDismissal(access, key, actor);
      throw await done(`Declined the dismissal of “${declined.title}”; the finding stays active.`);
    }
    const restored = await restoreFinding(access, key, actor);
    throw await done(restored.state === "awaiting-confirmation" ? `Withdrew the dismissal of “${restored.title}” before it was confirmed.` : `Restored “${restored.title}” to the active findings.`);
  } catch (error) {
    return refusedWith(error, (refusal) => refusedBody(key, { form: refusal.message, ...(refusal.field ? { [refusal.field]: refusal.message } : {}) }, values));
  }
}

import { data, redirect } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/dismissals";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { formValues, readForm, unknownIntent } from "#server/http/form.server";
import { refusedWith } from "#server/http/refusals.server";
import { dismissFinding, restoreFinding } from "#server/services/findings.server";
import { parseFindingKey } from "#server/engine/finding-keys";
import { clientAddressOf } from "#server/http/request-context.server";

const ReasonSchema = z
  .string()
  .trim()
  .min(3, "Say why this finding is accepted (at least 3 characters), so the next reader knows.")
  .max(500, "Keep the reason to at most 500 characters.");

/** The refusal the overview's dismiss/restore form shows beside its field, with what was typed. */
function refusedBody(key: string, errors: Record<string, string>, values: Record<string, string>) {
  return { ok: false as const, key, errors, values: { reason: values.reason ?? "" } };
}

function refused(status: 400, key: string, errors: Record<string, string>, values: Record<string, string>) {
  return data(refusedBody(key, errors, values), { status });
}

// Posts only: the overview shows the findings; this address has nothing to show on its own.
export async function loader({ context }: Route.LoaderArgs) {
  requireDevice(context);
  throw data({ message: "Dismissals are changed from the device overview (POST only)." }, { status: 405, headers: { Allow: "POST" } });
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireDevice(context, "engineer");
  const values = formValues(await readForm(request));
  const intent = values.intent;
  if (intent !== "dismiss" && intent !== "restore") return unknownIntent(intent);
  const key = values.key ?? "";
  if (!parseFindingKey(key)) return refused(400, key, { form: "That does not name a finding. Reload the overview and try again." }, values);
  const overview = `/o/${access.organisation.slug}/devices/${access.device.id}`;
  const actor = actorOf(access, clientAddressOf(context));
  try {
    if (intent === "dismiss") {
      const reason = ReasonSchema.safeParse(values.reason ?? "");
      if (!reason.success) return refused(400, key, { reason: reason.error.issues[0]?.message ?? "Enter a reason." }, values);
      const finding = await dismissFinding(access, key, reason.data, actor);
      throw redirect(overview, {
        headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Dismissed “${finding.title}”. The device is unchanged; restore the finding when the reason no longer holds.` }) },
      });
    }
    const restored = await restoreFinding(access, key, actor);
    throw redirect(overview, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `Restored “${restored.title}” to the active findings.` }) } });
  } catch (error) {
    return refusedWith(error, (refusal) => refusedBody(key, { form: refusal.message }, values));
  }
}

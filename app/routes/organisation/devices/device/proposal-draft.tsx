import { useEffect } from "react";
import { data, Link, NavLink, redirect, useFetcher } from "react-router";
import type { Route } from "./+types/proposal-draft";
import { serializeFlash } from "#server/auth/flash.server";
import { actorOf } from "#server/http/actor.server";
import { requireDevice } from "#server/http/device-access.server";
import { formValuesWithLists, planDeviceEdit, PlannedAttempt, refusedDeviceEdit } from "#server/http/device-forms.server";
import { invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { proposalIdOf } from "#server/http/proposal-steps.server";
import { refusedPage } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { readRuleView } from "#server/http/preferences.server";
import { loadSharedLibrary } from "#server/services/devices.server";
import { editDraft, proposalView } from "#server/services/proposals.server";
import { editorNamesOf } from "#app/components/device/name-groups";
import { SectionEditor } from "#app/components/device/section-editor";
import { DEVICE_SECTIONS, isDeviceSection, SECTION_TITLES, type DeviceSection } from "#app/components/device/sections";
import { StateBadge } from "#app/components/proposals/proposal-bits";
import { cx } from "#app/components/ui/cx";

// A proposal's draft in the device editor's own sections, under a banner that says it is not
// live: each save is one element edit of the draft (validated like a save, recorded so the
// draft can be re-applied later), never a revision of the device.

function sectionOf(value: string | undefined): DeviceSection {
  if (!isDeviceSection(value)) throw data({ message: `A draft has no section "${String(value).slice(0, 40)}".` }, { status: 404 });
  return value;
}

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Draft · ${params.section} · Sallyport` }];

export async function loader({ request, params, context }: Route.LoaderArgs) {
  const access = requireDevice(context);
  const section = sectionOf(params.section);
  const proposalId = proposalIdOf(params.proposal);
  try {
    const [view, library] = await Promise.all([
      proposalView({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId }, { userId: access.user.id, role: access.role }),
      loadSharedLibrary(access.organisation.id),
    ]);
    const document = view.draft;
    return {
      section,
      proposal: { id: view.proposal.id, title: view.proposal.title, state: view.proposal.state, baseRevision: view.proposal.baseRevision, draftVersion: view.proposal.draftVersion },
      proposalPath: `/o/${access.organisation.slug}/devices/${access.device.id}/proposals/${proposalId}`,
      // The draft version stands where the live editor has the revision: a save on an older version is refused.
      baseRevision: view.proposal.draftVersion,
      canEdit: view.can.edit,
      editing: new URL(request.url).searchParams.get("edit"),
      document,
      siteId: access.device.siteId,
      ruleView: section === "rules" ? await readRuleView(request) : ("detailed" as const),
      sites: [{ id: access.device.siteId, name: access.device.site.name }],
      names: editorNamesOf(document, library),
    };
  } catch (error) {
    return refusedPage(error);
  }
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const access = requireDevice(context, "engineer");
  const section = sectionOf(params.section);
  const proposalId = proposalIdOf(params.proposal);
  const values = formValuesWithLists(await readForm(request));
  if (values.intent === "delete-device") return unknownIntent(values.intent);
  const planned = planDeviceEdit(values.intent, values);
  if (!planned) return unknownIntent(values.intent);
  if (!planned.ok) return invalidForm(planned.errors, values);
  // A draft is the device's model document; the site is not part of it.
  if (planned.plan.siteId && planned.plan.siteId !== access.device.siteId) return invalidForm({ siteId: "A proposal changes the model, not the device's site: change the site in the live settings." }, values);
  const attempt = new PlannedAttempt(planned.plan);
  try {
    const saved = await editDraft({ organisationId: access.organisation.id, deviceId: access.device.id, proposalId }, Number(values.baseRevision), attempt, planned.plan.message, actorOf(access, clientAddressOf(context)));
    const message = saved.changed ? `${planned.plan.message} in the draft (version ${saved.draftVersion}). The device is unchanged.` : "Nothing changed in the draft.";
    throw redirect(`/o/${access.organisation.slug}/devices/${access.device.id}/proposals/${proposalId}/draft/${section}`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  } catch (error) {
    return refusedDeviceEdit(error, values, attempt, () => loadSharedLibrary(access.organisation.id));
  }
}

/** The effect JSON route's summary (…/effect?summary=1). */
type EffectSummary = { ok: true; proposal: { draftVersion: number }; effect: { headline: string; blocked: boolean; blocking: Array<{ kind: string; words: string }> } } | { ok: false; problems: string[] } | { error: string };

/**
 * The draft's effect in one line, fetched from the effect JSON route when the page opens and
 * again after each edit (the draft version changes), so the author sees what the change does
 * while drafting it. Announced politely to screen readers.
 */
function DraftEffectLine({ proposalPath, draftVersion }: { proposalPath: string; draftVersion: number }) {
  const { load, data: answer, state } = useFetcher<EffectSummary>();
  useEffect(() => {
    load(`${proposalPath}/effect?summary=1&version=${draftVersion}`);
  }, [load, proposalPath, draftVersion]);
  const current = answer && "ok" in answer && answer.ok && answer.proposal.draftVersion === draftVersion ? answer : null;
  return (
    <p className="mt-2 text-sm" aria-live="polite" data-testid="draft-effect" data-state={current ? "ready" : state}>
      <span className="font-medium">Effect of this draft: </span>
      {current ? (
        <>
          <span className={current.effect.blocked ? "font-medium text-danger" : undefined} data-testid="effect-headline">
            {current.effect.headline}
          </span>
          {/* The headline names lockouts already; the other blocks are said here. */}
          {current.effect.blocked ? <span className="text-danger"> — blocked{current.effect.blocking.some((entry) => entry.kind !== "lockout") ? `: ${current.effect.blocking.filter((entry) => entry.kind !== "lockout").map((entry) => entry.words).join(" ")}` : ""}.</span> : null}{" "}
        </>
      ) : answer && "ok" in answer && !answer.ok ? (
        <span className="text-danger">the draft is not a valid model. </span>
      ) : answer && "error" in answer ? (
        <span className="text-danger">{answer.error} </span>
      ) : (
        <span className="text-ink-muted">working it out… </span>
      )}
      <Link to={`${proposalPath}#effect-heading`} className="text-harbour underline underline-offset-4">
        See the whole effect
      </Link>
    </p>
  );
}

export default function DraftSection({ loaderData, actionData }: Route.ComponentProps) {
  const { proposal, proposalPath, section } = loaderData;
  return (
    <div className="space-y-4">
      <div role="note" className="rounded-card border-2 border-dashed border-brass bg-brass-soft p-4">
        <p className="flex flex-wrap items-center gap-2 font-semibold text-brass">
          Draft — not live <StateBadge state={proposal.state} />
        </p>
        <p className="mt-1 text-sm">
          You are editing the draft of{" "}
          <Link to={proposalPath} className="font-medium text-harbour underline underline-offset-4">
            “{proposal.title}”
          </Link>{" "}
          (version {proposal.draftVersion}, made on r{proposal.baseRevision}). Saves here change only the draft; the device changes when the proposal is approved and applied.
        </p>
        <DraftEffectLine proposalPath={proposalPath} draftVersion={proposal.draftVersion} />
      </div>
      <nav aria-label="Draft sections" className="flex flex-wrap gap-1 border-b border-line">
        {DEVICE_SECTIONS.map((entry) => (
          <NavLink
            key={entry}
            to={`${proposalPath}/draft/${entry}`}
            className={({ isActive }) => cx("-mb-px border-b-2 px-2 py-2 text-sm font-medium whitespace-nowrap", isActive ? "border-brass text-brass" : "border-transparent text-ink-muted hover:text-ink")}
          >
            {SECTION_TITLES[entry]}
          </NavLink>
        ))}
      </nav>
      <SectionEditor {...loaderData} section={section} draft errors={actionData?.errors ?? {}} values={actionData?.values ?? {}} />
    </div>
  );
}

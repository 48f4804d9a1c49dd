import { Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/assignment-new";
import { serializeFlash } from "#server/auth/flash.server";
import { appOrigin } from "#server/config.server";
import { plural } from "#server/engine/format";
import { actorOf } from "#server/http/actor.server";
import { formValuesWithLists } from "#server/http/device-forms.server";
import { fieldErrorsOf, invalidForm, readForm } from "#server/http/form.server";
import { refusedForm } from "#server/http/refusals.server";
import { clientAddressOf } from "#server/http/request-context.server";
import { assignableTargets, createAssignments, organisationMembers } from "#server/services/training-assignments.server";
import { requireTrainer } from "#server/training/access.server";
import { AssignmentFormSchema } from "#server/training/progress";
import { trainingPath } from "#server/training/routes.server";
import { PageErrorBoundary } from "#app/components/error-panel";
import { TextAreaField } from "#app/components/device/editor-kit";
import { Button, ButtonLink } from "#app/components/ui/button";
import { Card, PageHeader } from "#app/components/ui/card";
import { EmptyState } from "#app/components/ui/empty-state";
import { FieldNotes, FormError, SelectField, TextField } from "#app/components/ui/field";

// A trainer assigns a lesson or a drill to members with a due date (docs/decisions/016,
// "Assignments and progress"); each assignee is e-mailed a link to the assignment.

export const meta: Route.MetaFunction = () => [{ title: "Assign training · Sallyport" }];
export const ErrorBoundary = PageErrorBoundary;

const DAY = 86_400_000;

/** A week from now at 17:00 UTC, as a datetime-local field shows it. */
function suggestedDue(now: Date): string {
  const at = new Date(now.getTime() + 7 * DAY);
  return `${at.toISOString().slice(0, 10)}T17:00`;
}

export async function loader({ request, context }: Route.LoaderArgs) {
  const access = requireTrainer(context);
  const [targets, members] = await Promise.all([assignableTargets(access.organisation.id), organisationMembers(access.organisation.id)]);
  const wanted = new URL(request.url).searchParams.get("target") ?? "";
  return {
    trainingPath: trainingPath(access.organisation.slug),
    targets: targets.map((target) => ({ value: `${target.kind}:${target.id}`, title: target.title, detail: target.detail, kind: target.kind })),
    members: members.map((member) => ({ userId: member.userId, name: member.name, email: member.email, role: member.role })),
    target: targets.some((target) => `${target.kind}:${target.id}` === wanted) ? wanted : "",
    due: suggestedDue(new Date()),
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireTrainer(context);
  const values = formValuesWithLists(await readForm(request));
  const parsed = AssignmentFormSchema.safeParse(values);
  if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
  let result: Awaited<ReturnType<typeof createAssignments>>;
  try {
    // The e-mailed link's origin is the configured one, never the request's Host.
    result = await createAssignments(access.organisation, parsed.data, actorOf(access, clientAddressOf(context)), appOrigin());
  } catch (error) {
    return refusedForm(error, values);
  }
  const mailed = result.emailed === result.count ? "each was e-mailed a link" : `${plural(result.emailed, { one: "e-mail", other: "e-mails" })} sent of ${result.count}: tell the others yourself`;
  throw redirect(trainingPath(access.organisation.slug, "assignments"), {
    headers: { "Set-Cookie": await serializeFlash({ kind: "success", message: `“${result.title}” assigned to ${plural(result.count, { one: "member", other: "members" })}; ${mailed}.` }) },
  });
}

export default function NewAssignment({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const chosen = new Set((values.assignees ?? "").split(/\s+/).filter(Boolean));
  if (loaderData.targets.length === 0) {
    return (
      <>
        <PageHeader title="Assign training" />
        <EmptyState title="Nothing to assign yet" action={<ButtonLink to={`${loaderData.trainingPath}/lessons/new`}>New lesson</ButtonLink>}>
          Make a lesson (or a drill) first, then assign it.
        </EmptyState>
      </>
    );
  }
  return (
    <>
      <PageHeader title="Assign training" description="Give a lesson or a drill to members with a due date. Each of them is e-mailed a link; answers after the due date are accepted and marked late." />
      <Card className="max-w-3xl p-5">
        <FormError message={errors.form} />
        <Form method="post" className="space-y-5" noValidate aria-label="Assign training">
          <SelectField label="Lesson or drill" name="target" defaultValue={values.target ?? loaderData.target} error={errors.target}>
            <option value="">Choose…</option>
            {loaderData.targets.map((target) => (
              <option key={target.value} value={target.value}>
                {target.title} ({target.detail})
              </option>
            ))}
          </SelectField>
          <fieldset aria-describedby={errors.assignees ? "assignees-error" : undefined}>
            <legend className="text-sm font-medium">Members</legend>
            <ul className="mt-2 grid gap-2 sm:grid-cols-2">
              {loaderData.members.map((member) => (
                <li key={member.userId} className="flex items-start gap-2 text-sm">
                  <input type="checkbox" id={`assignee-${member.userId}`} name="assignees" value={member.userId} defaultChecked={chosen.has(member.userId)} className="mt-1" />
                  <label htmlFor={`assignee-${member.userId}`} className="min-w-0">
                    <span className="font-medium">{member.name}</span> <span className="text-ink-muted">({member.role})</span>
                    <span className="block truncate text-xs text-ink-muted">{member.email}</span>
                  </label>
                </li>
              ))}
            </ul>
            <FieldNotes id="assignees" error={errors.assignees} />
          </fieldset>
          <TextField label="Due (UTC)" name="dueAt" type="datetime-local" required defaultValue={values.dueAt ?? loaderData.due} error={errors.dueAt} hint="In UTC. Must be in the future; answers after it are still accepted, marked late." />
          <TextAreaField label="Note to the members (optional, plain text)" name="note" rows={3} defaultValue={values.note ?? ""} error={errors.note} hint="Sent in the e-mail and shown on the assignment." />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            Assign
          </Button>
        </Form>
      </Card>
    </>
  );
}

import { useState } from "react";
import { Form, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/members";
import { serializeFlash } from "#server/auth/flash.server";
import { requireRole } from "#server/auth/guard.server";
import { hasAtLeastRole, ROLE_DESCRIPTIONS, ROLES } from "#server/auth/roles";
import { appOrigin } from "#server/config.server";
import { actorOf } from "#server/http/actor.server";
import { fieldErrorsOf, formValues, invalidForm, readForm, unknownIntent } from "#server/http/form.server";
import { EmailSchema, IdSchema, RoleSchema } from "#server/http/schemas";
import { resetMemberSecondFactor } from "#server/services/second-factor.server";
import { changeMemberRole, inviteMember, listMembers, listPendingInvitations, removeMember, revokeInvitation, setMemberTrainer } from "#server/services/members.server";
import { mayManageTraining, ROLES_THAT_TRAIN } from "#models/roles";
import { Badge, Card } from "#app/components/ui/card";
import { Button } from "#app/components/ui/button";
import { Dialog } from "#app/components/ui/dialog";
import { FieldNotes, FormError, SelectField, TextField } from "#app/components/ui/field";
import { Table, Td, Th } from "#app/components/ui/table";
import { Time } from "#app/components/ui/time";
import { formatNumber } from "#server/engine/format";
import { clientAddressOf } from "#server/http/request-context.server";
import { refusedForm } from "#server/http/refusals.server";

export const meta: Route.MetaFunction = () => [{ title: "Members · Sallyport" }];

export async function loader({ context }: Route.LoaderArgs) {
  const access = requireRole(context);
  const canManage = hasAtLeastRole(access.role, "admin");
  return {
    members: await listMembers(access.organisation.id),
    invitations: canManage ? await listPendingInvitations(access.organisation.id) : [],
    canManage,
    myRole: access.role,
    myUserId: access.user.id,
    requireSecondFactor: access.organisation.requireSecondFactor,
    now: new Date().toISOString(),
  };
}

const InviteSchema = z.object({ email: EmailSchema, role: RoleSchema });
const ChangeRoleSchema = z.object({ membershipId: IdSchema, role: RoleSchema });
const MembershipSchema = z.object({ membershipId: IdSchema });
const TrainerSchema = z.object({ membershipId: IdSchema, trainer: z.enum(["on", "off"], { message: "Choose whether they train." }) });
const InvitationSchema = z.object({ invitationId: IdSchema });
const ResetSecondFactorSchema = z.object({
  membershipId: IdSchema,
  confirmed: z.literal("on", { message: "Tick the box once you have made sure, by a way other than e-mail, that the request comes from this member." }),
});

export async function action({ request, context }: Route.ActionArgs) {
  const access = requireRole(context, "admin");
  const actor = actorOf(access, clientAddressOf(context));
  const values = formValues(await readForm(request));
  const back = async (message: string) =>
    redirect(`/o/${access.organisation.slug}/settings/members`, { headers: { "Set-Cookie": await serializeFlash({ kind: "success", message }) } });
  try {
    switch (values.intent) {
      case "invite": {
        const parsed = InviteSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await inviteMember(access.organisation, parsed.data, actor, appOrigin());
        return back(`Invitation sent to ${parsed.data.email}.`);
      }
      case "change-role": {
        const parsed = ChangeRoleSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await changeMemberRole(access.organisation, parsed.data.membershipId, parsed.data.role, actor);
        return back("Role changed.");
      }
      case "set-trainer": {
        const parsed = TrainerSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await setMemberTrainer(access.organisation, parsed.data.membershipId, parsed.data.trainer === "on", actor);
        return back(parsed.data.trainer === "on" ? "Trainer capability given: they manage scenarios, lessons and drills." : "Trainer capability taken away.");
      }
      case "remove": {
        const parsed = MembershipSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await removeMember(access.organisation, parsed.data.membershipId, actor);
        return back("Member removed.");
      }
      case "reset-second-factor": {
        const parsed = ResetSecondFactorSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        const reset = await resetMemberSecondFactor(access.organisation, parsed.data.membershipId, actor, appOrigin());
        return back(
          `Second factor of ${reset.name} reset: signed out everywhere and told by e-mail. ${reset.enrolmentRequired ? "They set up a new one at their next sign-in." : "They sign in with the password alone until they set up a new one."}`,
        );
      }
      case "revoke-invitation": {
        const parsed = InvitationSchema.safeParse(values);
        if (!parsed.success) return invalidForm(fieldErrorsOf(parsed.error), values);
        await revokeInvitation(access.organisation, parsed.data.invitationId, actor);
        return back("Invitation revoked.");
      }
      default:
        return unknownIntent(values.intent);
    }
  } catch (error) {
    return refusedForm(error, values);
  }
}

type Member = Route.ComponentProps["loaderData"]["members"][number];

/** The trainer capability: a toggle for admins, words for everyone else; admins and owners have it always. */
function TrainerCell({ member, canManage }: { member: Member; canManage: boolean }) {
  if (ROLES_THAT_TRAIN.includes(member.role)) return <span className="text-sm text-ink-muted">always ({member.role})</span>;
  const trains = mayManageTraining(member.role, member.trainer);
  if (!canManage) return trains ? <Badge tone="brass">trainer</Badge> : <span className="text-sm text-ink-faint">no</span>;
  return (
    <Form method="post" className="flex items-center gap-2">
      <input type="hidden" name="intent" value="set-trainer" />
      <input type="hidden" name="membershipId" value={member.membershipId} />
      <input type="hidden" name="trainer" value={trains ? "off" : "on"} />
      {trains ? <Badge tone="brass">trainer</Badge> : null}
      <Button type="submit" size="sm" variant="ghost" aria-label={trains ? `Stop ${member.name} training` : `Make ${member.name} a trainer`}>
        {trains ? "Stop" : "Make trainer"}
      </Button>
    </Form>
  );
}

export default function Members({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [removing, setRemoving] = useState<Member | null>(null);
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  // A refused reset opens its dialog again, with the message beside the box.
  const refusedReset = values.intent === "reset-second-factor" ? (loaderData.members.find((member) => member.membershipId === values.membershipId) ?? null) : null;
  const [resetting, setResetting] = useState<Member | null>(refusedReset);
  // Adjusted while rendering when a new answer arrives (React's pattern for state that follows a prop).
  const [answerSeen, setAnswerSeen] = useState(actionData);
  if (answerSeen !== actionData) {
    setAnswerSeen(actionData);
    if (refusedReset) setResetting(refusedReset);
  }
  const resetTarget = resetting;
  const assignable = ROLES.filter((role) => role !== "owner" || loaderData.myRole === "owner");
  return (
    <div className="space-y-8">
      <FormError message={errors.form} />
      {loaderData.canManage ? (
        <Card className="p-5">
          <h2 className="text-sm font-semibold">Invite a member</h2>
          <p className="mt-1 text-sm text-ink-muted">They receive an e-mail with a single-use link, valid for 7 days.</p>
          <Form method="post" className="mt-4 grid gap-4 sm:grid-cols-[2fr_1fr_auto] sm:items-start" noValidate>
            <input type="hidden" name="intent" value="invite" />
            <TextField label="E-mail" name="email" type="email" required maxLength={254} defaultValue={values.intent === "invite" ? values.email : undefined} error={values.intent === "invite" ? errors.email : undefined} />
            <SelectField label="Role" name="role" defaultValue={values.intent === "invite" ? values.role : "engineer"} error={values.intent === "invite" ? errors.role : undefined}>
              {assignable.map((role) => (
                <option key={role} value={role}>
                  {role}
                </option>
              ))}
            </SelectField>
            <div className="sm:pt-7">
              <Button type="submit" disabled={navigation.state === "submitting"}>
                Send invitation
              </Button>
            </div>
          </Form>
        </Card>
      ) : null}

      <section aria-labelledby="members-heading">
        <h2 id="members-heading" className="mb-3 text-sm font-semibold">
          Members ({formatNumber(loaderData.members.length)})
        </h2>
        <Table>
          <thead>
            <tr>
              <Th>Name</Th>
              <Th>E-mail</Th>
              <Th>Role</Th>
              <Th>Trainer</Th>
              {loaderData.canManage ? <Th>Second factor</Th> : null}
              {loaderData.canManage ? <Th className="text-right">Actions</Th> : null}
            </tr>
          </thead>
          <tbody>
            {loaderData.members.map((member) => {
              // Nobody changes or removes their own membership from here: another admin or owner does.
              const editable = loaderData.canManage && member.userId !== loaderData.myUserId && (member.role !== "owner" || loaderData.myRole === "owner");
              return (
                <tr key={member.membershipId}>
                  <Td className="font-medium">
                    {member.name} {member.userId === loaderData.myUserId ? <Badge>you</Badge> : null}
                  </Td>
                  <Td className="text-ink-muted">{member.email}</Td>
                  <Td>
                    {editable ? (
                      <Form method="post" className="flex items-center gap-2">
                        <input type="hidden" name="intent" value="change-role" />
                        <input type="hidden" name="membershipId" value={member.membershipId} />
                        <label className="sr-only" htmlFor={`role-${member.membershipId}`}>
                          Role of {member.name}
                        </label>
                        <select id={`role-${member.membershipId}`} name="role" defaultValue={member.role} className="h-8 rounded-control border border-line-strong bg-surface px-2 text-sm">
                          {assignable.map((role) => (
                            <option key={role} value={role}>
                              {role}
                            </option>
                          ))}
                        </select>
                        <Button type="submit" size="sm" variant="secondary">
                          Change
                        </Button>
                      </Form>
                    ) : (
                      <Badge tone={member.role === "owner" ? "brass" : "harbour"}>{member.role}</Badge>
                    )}
                  </Td>
                  <Td>
                    <TrainerCell member={member} canManage={loaderData.canManage} />
                  </Td>
                  {loaderData.canManage ? <Td className="text-sm text-ink-muted">{member.secondFactor ? "on" : "none"}</Td> : null}
                  {loaderData.canManage ? (
                    <Td className="text-right">
                      {editable ? (
                        <div className="flex flex-wrap justify-end gap-1">
                          {member.secondFactor ? (
                            <Button size="sm" variant="ghost-danger" onClick={() => setResetting(member)} aria-label={`Reset the second factor of ${member.name}`}>
                              Reset second factor
                            </Button>
                          ) : null}
                          <Button size="sm" variant="ghost-danger" onClick={() => setRemoving(member)} aria-label={`Remove ${member.name}`}>
                            Remove
                          </Button>
                        </div>
                      ) : null}
                    </Td>
                  ) : null}
                </tr>
              );
            })}
          </tbody>
        </Table>
      </section>

      {loaderData.canManage && loaderData.invitations.length > 0 ? (
        <section aria-labelledby="invitations-heading">
          <h2 id="invitations-heading" className="mb-3 text-sm font-semibold">
            Open invitations
          </h2>
          <Table>
            <thead>
              <tr>
                <Th>E-mail</Th>
                <Th>Role</Th>
                <Th>Expires</Th>
                <Th className="text-right">Actions</Th>
              </tr>
            </thead>
            <tbody>
              {loaderData.invitations.map((invitation) => (
                <tr key={invitation.id}>
                  <Td>{invitation.email}</Td>
                  <Td>{invitation.role}</Td>
                  <Td className="tabular text-ink-muted">
                    <Time at={invitation.expiresAt} now={loaderData.now} />
                  </Td>
                  <Td className="text-right">
                    <Form method="post">
                      <input type="hidden" name="intent" value="revoke-invitation" />
                      <input type="hidden" name="invitationId" value={invitation.id} />
                      <Button type="submit" size="sm" variant="ghost">
                        Revoke
                      </Button>
                    </Form>
                  </Td>
                </tr>
              ))}
            </tbody>
          </Table>
        </section>
      ) : null}

      <section aria-labelledby="roles-heading">
        <h2 id="roles-heading" className="mb-3 text-sm font-semibold">
          What each role may do
        </h2>
        <dl className="grid gap-2 text-sm sm:grid-cols-[8rem_1fr]">
          {ROLES.map((role) => (
            <div key={role} className="contents">
              <dt className="font-medium">{role}</dt>
              <dd className="text-ink-muted">{ROLE_DESCRIPTIONS[role]}</dd>
            </div>
          ))}
          <div className="contents">
            <dt className="font-medium">trainer</dt>
            <dd className="text-ink-muted">A capability beside the role: manages training scenarios, lessons and drills, and sees trainees' results. Admins and owners have it always.</dd>
          </div>
        </dl>
      </section>

      <Dialog
        open={removing !== null}
        onClose={() => setRemoving(null)}
        title={`Remove ${removing?.name ?? "member"}?`}
        footer={
          <Form method="post" onSubmit={() => setRemoving(null)}>
            <input type="hidden" name="intent" value="remove" />
            <input type="hidden" name="membershipId" value={removing?.membershipId ?? ""} />
            <Button type="submit" variant="danger">
              Remove member
            </Button>
          </Form>
        }
      >
        {removing?.email} loses access to this organisation at once. Their account and other organisations stay.
      </Dialog>

      <Dialog
        open={resetTarget !== null}
        onClose={() => setResetting(null)}
        title={`Reset the second factor of ${resetTarget?.name ?? "member"}?`}
        footer={
          <Button type="submit" form="reset-second-factor" variant="danger">
            Reset second factor
          </Button>
        }
      >
        <p>
          For a member who lost both the authenticator app and the recovery codes. Their authenticator and recovery codes stop working, they are signed out everywhere, and {resetTarget?.email} is told by
          e-mail. Whoever has their password can then sign in without a second factor{" "}
          {loaderData.requireSecondFactor ? "and is asked to set up a new one at once" : "until a new one is set up"}, so make sure the request comes from them first.
        </p>
        {/* Only while open, so the page holds no second field whose label names an e-mail. */}
        {resetTarget ? (
          <Form id="reset-second-factor" method="post" className="mt-4" noValidate onSubmit={() => setResetting(null)}>
            <input type="hidden" name="intent" value="reset-second-factor" />
            <input type="hidden" name="membershipId" value={resetTarget?.membershipId ?? ""} />
            <label className="flex items-start gap-2 text-ink">
              <input type="checkbox" name="confirmed" value="on" className="mt-1" aria-describedby={refusedReset && errors.confirmed ? "reset-confirmed-error" : undefined} />
              <span>I made sure, by a way other than e-mail (in person, or by calling a number we already had), that this request comes from this member.</span>
            </label>
            <FieldNotes id="reset-confirmed" error={refusedReset ? errors.confirmed : undefined} />
          </Form>
        ) : null}
      </Dialog>
    </div>
  );
}


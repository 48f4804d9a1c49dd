// The training tests' world: the proposals' team (one member per role, the MOLE device), with
// its reviewer given the trainer capability — a trainer who may not edit the fleet.
import { Membership } from "#models/index";
import { makeTeam, type Team } from "./proposal-team";
import { UUID } from "./html";
import type { FetchResult } from "./client";

export type TrainingTeam = Team & { training: string };

export async function makeTrainingTeam(label: string): Promise<TrainingTeam> {
  const team = await makeTeam(`training-${label}`);
  await Membership.update({ trainer: true }, { where: { organisationId: team.organisationId, userId: team.members.reviewer.userId } });
  return { ...team, training: `/o/${team.slug}/training` };
}

/** The id at the end of a redirect to a training page, e.g. …/scenarios/<id>. */
export function createdId(response: FetchResult, kind: string): string {
  const id = new RegExp(`/training/${kind}/(${UUID})`).exec(response.location ?? "")?.[1];
  if (response.status !== 302 || !id) throw new Error(`expected a redirect to a new ${kind}: ${response.status} ${response.location ?? response.text.slice(0, 300)}`);
  return id;
}

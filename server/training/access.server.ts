// The guard line of training routes (docs/decisions/016): taking lessons and drills is open to
// every member (`requireRole(context)`); managing them needs the trainer capability.
import { data } from "react-router";
import { mayManageTraining } from "#models/roles.ts";
import { requireRole, type OrganisationAccess } from "../auth/guard.server.ts";
import type { RequestContext } from "../http/request-context.server.ts";

export type TrainingAccess = OrganisationAccess & { trainer: boolean };

/** Any member, with whether they manage training (for links and buttons). */
export function requireLearner(context: RequestContext): TrainingAccess {
  const access = requireRole(context);
  return { ...access, trainer: mayManageTraining(access.role, access.membership.trainer) };
}

/** A member who manages training, else 403 (words that say how to get it). */
export function requireTrainer(context: RequestContext): TrainingAccess {
  const access = requireLearner(context);
  if (!access.trainer) {
    throw data({ message: "Managing training needs the trainer capability: an admin can give it to you on the Members page." }, { status: 403 });
  }
  return access;
}

import { data } from "react-router";
import { requireMember, type OrganisationAccess } from "../auth/guard.server.ts";
import type { Role } from "../auth/roles.ts";
import { findDevice, type DeviceWithRevision } from "../services/devices.server.ts";

/** The guard for device pages: a member with the role, and a device of this organisation (else 404). */
export async function requireDevice(
  request: Request,
  params: { organisation?: string; device?: string },
  minimumRole: Role = "trainee",
  revisionNumber?: number,
): Promise<OrganisationAccess & DeviceWithRevision> {
  const access = await requireMember(request, params.organisation, minimumRole);
  const found = params.device ? await findDevice(access.organisation.id, params.device, revisionNumber) : null;
  if (!found) throw data({ message: revisionNumber ? `This device has no revision ${revisionNumber}.` : "No such device in this organisation." }, { status: 404 });
  return { ...access, ...found };
}

/** A revision number from the URL, or a 400 for anything that is not a positive whole number. */
export function revisionNumberOf(value: string | undefined | null): number {
  const number = Number(value);
  if (!value || !Number.isInteger(number) || number < 1 || number > 1_000_000) throw data({ message: `"${String(value).slice(0, 20)}" is not a revision number.` }, { status: 400 });
  return number;
}

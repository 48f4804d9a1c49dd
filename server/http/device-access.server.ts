// The device half of the request guard: the device layout's middleware resolves the device in
// the URL once per request (404 when it is not this organisation's), and device loaders and
// actions begin with `const access = requireDevice(context, "engineer");`.
import { data } from "react-router";
import type { OrganisationAccess } from "../auth/guard.server.ts";
import { requireRole } from "../auth/guard.server.ts";
import type { Role } from "../auth/roles.ts";
import { deviceRevisions, type DeviceAtRevision } from "../devices/index.ts";
import { deviceContext, organisationContext, type Middleware, type RequestContext } from "./request-context.server.ts";

export type DeviceAccess = OrganisationAccess & DeviceAtRevision;

export const deviceMiddleware: Middleware = async ({ params, context }, next) => {
  const access = context.get(organisationContext);
  if (!access) throw new Error("the device middleware runs below the organisation middleware");
  const found = params.device ? await deviceRevisions.find(access.organisation.id, params.device) : null;
  if (!found) throw data({ message: "No such device in this organisation." }, { status: 404 });
  context.set(deviceContext, found);
  return next();
};

/** The member's access (at least `minimumRole`, else 403) and the device at its current revision. */
export function requireDevice(context: RequestContext, minimumRole: Role = "trainee"): DeviceAccess {
  const access = requireRole(context, minimumRole);
  const device = context.get(deviceContext);
  if (!device) throw new Error("requireDevice used outside the device routes");
  return { ...access, ...device };
}

/** The same device at another revision (history, export); 404 when it has no such revision. */
export async function requireDeviceRevision(access: DeviceAccess, revisionNumber: number): Promise<DeviceAtRevision> {
  if (revisionNumber === access.revision.number) return access;
  const found = await deviceRevisions.find(access.organisation.id, access.device.id, { revisionNumber });
  if (!found) throw data({ message: `This device has no revision ${revisionNumber}.` }, { status: 404 });
  return found;
}

/** A revision number from the URL, or a 400 for anything that is not a positive whole number. */
export function revisionNumberOf(value: string | undefined | null): number {
  const number = Number(value);
  if (!value || !Number.isInteger(number) || number < 1 || number > 1_000_000) throw data({ message: `"${String(value).slice(0, 20)}" is not a revision number.` }, { status: 400 });
  return number;
}

// Devices: the list (paged by name), one device, and a new device from a model document.
import { PAGE_ROLES } from "../../auth/roles.ts";
import { deviceRevisions, type DeviceAtRevision } from "../../devices/index.ts";
import { isOutcome } from "../../engine/index.ts";
import { Refusal } from "../../errors.ts";
import { fleetDeviceRows, type FleetDeviceRow } from "../../services/device-list.server.ts";
import { createDevice } from "../../services/devices.server.ts";
import { MAX_DOCUMENT_REQUEST_BYTES } from "../../validation/limits.ts";
import { defineEndpoint } from "../endpoint.server.ts";
import { pageOf, PageQuerySchema, pageSchema } from "../pagination.ts";
import { DeviceDetailSchema, DeviceParams, DeviceSchema, NewDeviceBody } from "./schemas.ts";

function deviceOf(row: FleetDeviceRow) {
  return {
    id: row.id,
    name: row.name,
    site: { id: row.siteId, name: row.siteName },
    revision: row.revision,
    updatedAt: row.updatedAt,
    updatedBy: row.updatedBy,
    findingsBySeverity: row.findingsBySeverity,
    worstOutsideOutcome: isOutcome(row.worstOutsideOutcome) ? row.worstOutsideOutcome : null,
    openProposals: row.openProposals,
  } as const;
}

/** The device's row in the fleet table (its active findings and open proposals) with the current revision's facts. */
async function deviceDetail(organisationId: string, found: DeviceAtRevision) {
  const row = (await fleetDeviceRows(organisationId)).find((candidate) => candidate.id === found.device.id);
  // Only a device deleted between the two reads can be missing.
  if (!row) throw new Refusal("No such device in this organisation.", 404);
  return {
    ...deviceOf(row),
    timezone: found.effective.device.timezone,
    counts: found.revision.summary.counts,
    interfaces: found.effective.interfaces.map((entry) => ({ name: entry.name, role: entry.role, addresses: [...entry.addresses] })),
  };
}

export const listDevicesEndpoint = defineEndpoint({
  method: "get",
  path: "/devices",
  operationId: "listDevices",
  summary: "List devices",
  description: "The organisation's devices by name, each with its current revision, its active findings by severity and its open proposals.",
  tag: "Devices",
  scope: "read",
  role: "trainee",
  query: PageQuerySchema,
  response: { status: 200, description: "A page of devices.", schema: pageSchema(DeviceSchema, "DevicePage", "A page of devices, by name.") },
  async handle({ principal, query }) {
    const rows = await fleetDeviceRows(principal.organisation.id);
    // Names are unique per organisation: the name is the list's key.
    const sorted = [...rows].sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    const page = pageOf(sorted, (row) => row.name, query);
    return { body: { items: page.items.map(deviceOf), nextCursor: page.nextCursor } };
  },
});

export const getDeviceEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}",
  operationId: "getDevice",
  summary: "Get a device",
  description: "One device at its current revision: the fleet table's facts, its time zone, element counts and interfaces.",
  tag: "Devices",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  response: { status: 200, description: "The device.", schema: DeviceDetailSchema },
  async handle({ principal, device }) {
    return { body: await deviceDetail(principal.organisation.id, device) };
  },
});

export const createDeviceEndpoint = defineEndpoint({
  method: "post",
  path: "/devices",
  operationId: "createDevice",
  summary: "Create a device from a model document",
  description:
    "Creates a device at a site of the organisation, its first revision being the document (validated like an import: problems come back with their document paths in `issues`). The device's name is the document's; a name taken in the organisation is a 409.",
  tag: "Devices",
  scope: "write",
  role: PAGE_ROLES.importModel,
  body: NewDeviceBody,
  bodyLimit: MAX_DOCUMENT_REQUEST_BYTES,
  refusals: [409, 413, 415],
  response: { status: 201, description: "The new device; Location names it.", schema: DeviceDetailSchema },
  async handle({ principal, actor, body }) {
    const organisationId = principal.organisation.id;
    const created = await createDevice(organisationId, body.siteId, body.document, actor, body.message);
    const found = await deviceRevisions.find(organisationId, created.id);
    if (!found) throw new Refusal("No such device in this organisation.", 404);
    return { status: 201, body: await deviceDetail(organisationId, found), headers: { Location: `/api/v1/devices/${created.id}` } };
  },
});

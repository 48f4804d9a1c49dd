// Field checks through the API (issue 13, docs/decisions/015): a pipeline posts what it observed
// from a vantage point and gets each row predicted with the revision live at its time; it reads
// the device's checks back. The field-checks service does the work and writes the audit entry
// (with the token's name); the roles are the Field checks tab's.
import { z } from "zod";
import { Refusal } from "../../errors.ts";
import { FIELD_CHECK_ROLE, FieldCheckInputSchema, FieldCheckSchema, FieldCheckSummarySchema, findFieldCheck, listFieldChecks, recordFieldCheckList } from "../../services/field-checks.server.ts";
import { defineEndpoint } from "../endpoint.server.ts";
import { PageQuerySchema, pageOf, pageSchema } from "../pagination.ts";
import { DeviceParams } from "./schemas.ts";

const FieldCheckBody = FieldCheckInputSchema.meta({
  id: "NewFieldCheck",
  description: "Observations made from a vantage point, each predicted with the revision live at its `when` (docs/field-checks.md has the words of `observed`).",
});
const FieldCheckAnswer = FieldCheckSchema.meta({ id: "FieldCheck", description: "A recorded field check: its counts and every row — agreement, difference with its likely reason, or why it could not be checked." });
const FieldCheckSummaryAnswer = FieldCheckSummarySchema.meta({ id: "FieldCheckSummary", description: "A recorded field check without its rows." });
const FieldCheckParams = DeviceParams.extend({ check: z.uuid({ message: "must be a UUID (the field check's id)" }).meta({ description: "The field check's id (a UUID)." }) });

export const recordFieldCheckEndpoint = defineEndpoint({
  method: "post",
  path: "/devices/{device}/field-checks",
  operationId: "recordFieldCheck",
  summary: "Record a field check",
  description:
    "Checks observations against the model: each row is predicted with the revision that was live at its time and agrees, differs (with its likely reason: the model was out of date, the change had not reached the device, or the device differs from its configuration) or could not be checked (with why). A bad row is reported on its own, never dropped; the check is kept and audited.",
  tag: "Field checks",
  scope: "write",
  role: FIELD_CHECK_ROLE,
  params: DeviceParams,
  device: true,
  body: FieldCheckBody,
  refusals: [413, 415],
  response: { status: 201, description: "The recorded check with every row.", schema: FieldCheckAnswer },
  async handle({ principal, actor, device, body }) {
    const check = await recordFieldCheckList(principal.organisation.id, device.device.id, body, actor);
    return { status: 201, body: check, headers: { Location: `/api/v1/devices/${device.device.id}/field-checks/${check.id}` } };
  },
});

export const listFieldChecksEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/field-checks",
  operationId: "listFieldChecks",
  summary: "List field checks",
  description: "The device's recorded field checks, newest first, without their rows.",
  tag: "Field checks",
  scope: "read",
  role: "trainee",
  params: DeviceParams,
  device: true,
  query: PageQuerySchema,
  response: { status: 200, description: "A page of field checks.", schema: pageSchema(FieldCheckSummaryAnswer, "FieldCheckPage", "A page of field checks, newest first.") },
  async handle({ principal, device, query }) {
    const checks = await listFieldChecks(principal.organisation.id, device.device.id);
    // Newest first; the id breaks a tie of two checks recorded in the same millisecond.
    const page = pageOf(checks, (check) => `${check.createdAt}|${check.id}`, query, { descending: true });
    return { body: { items: page.items, nextCursor: page.nextCursor } };
  },
});

export const getFieldCheckEndpoint = defineEndpoint({
  method: "get",
  path: "/devices/{device}/field-checks/{check}",
  operationId: "getFieldCheck",
  summary: "Get a field check",
  description: "One recorded field check with every row.",
  tag: "Field checks",
  scope: "read",
  role: "trainee",
  params: FieldCheckParams,
  device: true,
  response: { status: 200, description: "The check with every row.", schema: FieldCheckAnswer },
  async handle({ principal, device, params }) {
    const check = await findFieldCheck(principal.organisation.id, device.device.id, params.check);
    if (!check) throw new Refusal("This device has no field check with that id.", 404);
    return { body: check };
  },
});

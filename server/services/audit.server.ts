import { Op, type Transaction, type WhereOptions } from "sequelize";
import { AuditEvent, Device, Membership, Organisation, Site, User } from "#models/index.ts";
import { isAuditAction, type AuditAction, type AuditTargetType } from "#models/audit-actions.ts";
import { pageOf } from "../analysis/paging.ts";
import { isUuid } from "../validation/ids.ts";

/** Who did it; `apiToken` when they did it through the REST API (docs/decisions/014). */
export type AuditActor = { userId: string | null; email: string; clientAddress: string; apiToken?: { id: string; name: string } };

export type AuditEntry = {
  organisationId: string | null;
  action: AuditAction;
  targetType: AuditTargetType;
  targetId?: string;
  /** What changed, as { field: { from, to } } or a short description of the values. */
  changes?: Record<string, unknown>;
};

/**
 * Appends one line to the audit log; the table refuses updates and deletes. Pass the change's
 * transaction so the entry and the change are written together or not at all.
 */
export async function recordAuditEvent(actor: AuditActor, entry: AuditEntry, transaction?: Transaction): Promise<void> {
  await AuditEvent.create({
    organisationId: entry.organisationId,
    actorUserId: actor.userId,
    actorEmail: actor.email,
    action: entry.action,
    targetType: entry.targetType,
    targetId: entry.targetId ?? "",
    changes: entry.changes ?? {},
    clientAddress: actor.clientAddress.slice(0, 64),
    apiTokenId: actor.apiToken?.id ?? null,
    apiTokenName: actor.apiToken?.name ?? "",
  }, { transaction });
}

/**
 * Appends several lines in one statement, in the change's transaction: for a change of many
 * objects at once (a CSV import of thousands of shared objects), where one insert per line
 * would cost a round trip each. The same rows `recordAuditEvent` writes, in the given order.
 */
export async function recordAuditEvents(actor: AuditActor, entries: readonly AuditEntry[], transaction: Transaction): Promise<void> {
  if (entries.length === 0) return;
  const rows = entries.map((entry) => ({ organisation_id: entry.organisationId, action: entry.action, target_type: entry.targetType, target_id: entry.targetId ?? "", changes: entry.changes ?? {} }));
  // One statement with the rows as one JSON parameter: Sequelize's bulkCreate spent seconds building 25,000 rows.
  await AuditEvent.sequelize!.query(
    `INSERT INTO audit_events (organisation_id, actor_user_id, actor_email, action, target_type, target_id, changes, client_address)
     SELECT r.organisation_id, :actorUserId, :actorEmail, r.action, r.target_type, r.target_id, r.changes, :clientAddress
     FROM ROWS FROM (jsonb_to_recordset(CAST(:rows AS jsonb)) AS (organisation_id uuid, action text, target_type text, target_id text, changes jsonb))
       WITH ORDINALITY AS r(organisation_id, action, target_type, target_id, changes, ordinal)
     ORDER BY r.ordinal`,
    { replacements: { actorUserId: actor.userId, actorEmail: actor.email, clientAddress: actor.clientAddress.slice(0, 64), rows: JSON.stringify(rows) }, transaction },
  );
}

// ---------------------------------------------------------------------------------------------
// Reading the log: filters from the URL, names instead of ids, pages and the CSV.

export const AUDIT_PAGE_SIZE = 50;
/** The CSV holds at most this many entries, newest first; narrow the filters for older ones. */
export const AUDIT_CSV_LIMIT = 10_000;

/** The audit page's filters, all in the URL so a view can be shared and exported as it is. */
export type AuditQuery = {
  /** A user id ("" = anyone). */
  actor: string;
  action: AuditAction | "";
  /** A device id: entries about that device ("" = any). */
  device: string;
  /** First and last day, inclusive, as YYYY-MM-DD in UTC ("" = open). */
  from: string;
  to: string;
  page: string;
};


/** A calendar day "YYYY-MM-DD" that exists (ISO 8601 calendar date), else "". */
function dayOf(value: string | null): string {
  if (!value || !/^\d{4}-\d{2}-\d{2}$/.test(value)) return "";
  const date = new Date(`${value}T00:00:00Z`);
  return !Number.isNaN(date.getTime()) && date.toISOString().startsWith(value) ? value : "";
}

/**
 * Reads the filters leniently: an unknown value means "no filter" rather than an error,
 * because these links are shared and bookmarked and old values must still open.
 */
export function parseAuditQuery(params: URLSearchParams): AuditQuery {
  const actor = params.get("actor") ?? "";
  const action = params.get("action") ?? "";
  const device = params.get("device") ?? "";
  return {
    actor: isUuid(actor) ? actor : "",
    action: isAuditAction(action) ? action : "",
    device: isUuid(device) ? device : "",
    from: dayOf(params.get("from")),
    to: dayOf(params.get("to")),
    page: (params.get("page") ?? "").slice(0, 9),
  };
}

function whereOf(organisationId: string, query: AuditQuery): WhereOptions<AuditEvent> {
  const createdAt = {
    ...(query.from ? { [Op.gte]: new Date(`${query.from}T00:00:00Z`) } : {}),
    // Inclusive: up to the start of the next day.
    ...(query.to ? { [Op.lt]: new Date(Date.parse(`${query.to}T00:00:00Z`) + 24 * 60 * 60 * 1000) } : {}),
  };
  return {
    organisationId,
    ...(query.actor ? { actorUserId: query.actor } : {}),
    ...(query.action ? { action: query.action } : {}),
    ...(query.device ? { targetType: "device", targetId: query.device } : {}),
    ...(query.from || query.to ? { createdAt } : {}),
  };
}

/** One entry with the names of who did it and to what, as they are now (or were, once deleted). */
export type AuditRow = {
  id: string;
  at: Date;
  actorUserId: string | null;
  /** The actor's current name; null when the account no longer exists. */
  actorName: string | null;
  actorEmail: string;
  action: string;
  targetType: string;
  targetId: string;
  /** The target's name: current, or as the entry recorded it once the target is gone. */
  targetName: string | null;
  changes: Record<string, unknown>;
  clientAddress: string;
  /** The API token the entry was made through ("" when made in the app). */
  apiTokenName: string;
};

const text = (value: unknown): string | null => (typeof value === "string" && value !== "" ? value : null);

/** A name the entry itself recorded, for a target that no longer exists. */
function recordedName(event: AuditEvent): string | null {
  const { changes } = event;
  const name = changes.name;
  if (name && typeof name === "object" && "to" in name) return text(name.to);
  return text(name) ?? text(changes.device) ?? text(changes.email);
}

/** The names of targets that no longer exist, as the latest entry about each recorded it. */
async function recordedNames(organisationId: string, targets: readonly { type: string; id: string }[]): Promise<Map<string, string>> {
  const names = new Map<string, string>();
  if (targets.length === 0) return names;
  const events = await AuditEvent.findAll({
    where: { organisationId, [Op.or]: targets.map(({ type, id }) => ({ targetType: type, targetId: id })) },
    attributes: ["id", "targetType", "targetId", "changes"],
    order: [["id", "DESC"]],
  });
  for (const event of events) {
    const key = `${event.targetType}:${event.targetId}`;
    const name = recordedName(event);
    if (name && !names.has(key)) names.set(key, name);
  }
  return names;
}

/** Names for the actors and targets of these entries, in one query per kind of target. */
async function withNames(organisationId: string, events: readonly AuditEvent[]): Promise<AuditRow[]> {
  const idsOf = (type: string) => [...new Set(events.filter((event) => event.targetType === type && isUuid(event.targetId)).map((event) => event.targetId))];
  const [devices, sites, memberships, organisation] = await Promise.all([
    Device.findAll({ where: { organisationId, id: idsOf("device") }, attributes: ["id", "name"] }),
    Site.findAll({ where: { organisationId, id: idsOf("site") }, attributes: ["id", "name"] }),
    Membership.findAll({ where: { organisationId, id: idsOf("membership") }, attributes: ["id", "userId"] }),
    Organisation.findByPk(organisationId, { attributes: ["id", "name"] }),
  ]);
  const userIds = new Set([...events.map((event) => event.actorUserId), ...idsOf("user"), ...memberships.map((membership) => membership.userId)].filter((id): id is string => id !== null));
  const users = new Map((await User.findAll({ where: { id: [...userIds] }, attributes: ["id", "name"] })).map((user) => [user.id, user.name]));
  const names = new Map<string, string>();
  for (const device of devices) names.set(`device:${device.id}`, device.name);
  for (const site of sites) names.set(`site:${site.id}`, site.name);
  for (const membership of memberships) {
    const name = users.get(membership.userId);
    if (name) names.set(`membership:${membership.id}`, name);
  }
  for (const [id, name] of users) names.set(`user:${id}`, name);
  if (organisation) names.set(`organisation:${organisation.id}`, organisation.name);
  // Shared objects are known by their name, which is their id in the log.
  for (const event of events) if (event.targetType === "shared-object" && event.targetId) names.set(`shared-object:${event.targetId}`, event.targetId);
  const missing = new Map<string, { type: string; id: string }>();
  for (const event of events) {
    const key = `${event.targetType}:${event.targetId}`;
    if (event.targetId && !names.has(key)) missing.set(key, { type: event.targetType, id: event.targetId });
  }
  const recorded = await recordedNames(organisationId, [...missing.values()]);
  return events.map((event) => {
    const key = `${event.targetType}:${event.targetId}`;
    return {
      id: String(event.id),
      at: event.createdAt,
      actorUserId: event.actorUserId,
      actorName: event.actorUserId ? (users.get(event.actorUserId) ?? null) : null,
      actorEmail: event.actorEmail,
      action: event.action,
      targetType: event.targetType,
      targetId: event.targetId,
      targetName: names.get(key) ?? recorded.get(key) ?? recordedName(event),
      changes: event.changes,
      clientAddress: event.clientAddress,
      apiTokenName: event.apiTokenName,
    };
  });
}

/** One page of the organisation's log under the filters, newest first, with the total. */
export async function auditLogPage(organisationId: string, query: AuditQuery, size = AUDIT_PAGE_SIZE): Promise<{ rows: AuditRow[]; total: number; page: number; pages: number }> {
  const where = whereOf(organisationId, query);
  const total = await AuditEvent.count({ where });
  const { page, pages, start } = pageOf(query.page, total, size);
  const events = await AuditEvent.findAll({ where, order: [["id", "DESC"]], limit: size, offset: start });
  return { rows: await withNames(organisationId, events), total, page, pages };
}

/** Every entry under the filters for the CSV, newest first, up to AUDIT_CSV_LIMIT. */
export async function auditLogRows(organisationId: string, query: AuditQuery, limit = AUDIT_CSV_LIMIT): Promise<AuditRow[]> {
  const events = await AuditEvent.findAll({ where: whereOf(organisationId, query), order: [["id", "DESC"]], limit });
  return withNames(organisationId, events);
}

export type AuditFilterChoices = { actors: { id: string; label: string }[]; devices: { id: string; label: string }[] };

/** Who appears in the organisation's log and which devices it names, for the filter lists. */
export async function auditFilterChoices(organisationId: string): Promise<AuditFilterChoices> {
  const [actors, devices] = await Promise.all([
    AuditEvent.findAll({ where: { organisationId, actorUserId: { [Op.ne]: null } }, attributes: ["actorUserId", "actorEmail"], group: ["actorUserId", "actorEmail"] }),
    AuditEvent.findAll({ where: { organisationId, targetType: "device" }, attributes: ["targetId"], group: ["targetId"] }),
  ]);
  const userIds = [...new Set(actors.map((actor) => actor.actorUserId).filter((id): id is string => id !== null))];
  const users = new Map((await User.findAll({ where: { id: userIds }, attributes: ["id", "name", "email"] })).map((user) => [user.id, `${user.name} (${user.email})`]));
  const actorLabels = new Map<string, string>();
  for (const actor of actors) if (actor.actorUserId && !actorLabels.has(actor.actorUserId)) actorLabels.set(actor.actorUserId, users.get(actor.actorUserId) ?? actor.actorEmail);
  const deviceIds = [...new Set(devices.map((event) => event.targetId).filter(isUuid))];
  const current = new Map((await Device.findAll({ where: { organisationId, id: deviceIds }, attributes: ["id", "name"] })).map((device) => [device.id, device.name]));
  const gone = await recordedNames(
    organisationId,
    deviceIds.filter((id) => !current.has(id)).map((id) => ({ type: "device", id })),
  );
  const deviceLabels = new Map(deviceIds.map((id) => [id, current.get(id) ?? `${gone.get(`device:${id}`) ?? "unnamed device"} (deleted)`]));
  const sorted = (labels: Map<string, string>) => [...labels].map(([id, label]) => ({ id, label })).sort((a, b) => a.label.localeCompare(b.label));
  return { actors: sorted(actorLabels), devices: sorted(deviceLabels) };
}

import { UniqueConstraintError, type Transaction } from "sequelize";
import { Device, Site } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import { Refusal } from "../errors.ts";
import { recordAuditEvent, type AuditActor } from "./audit.server.ts";

export type SiteInput = { name: string; customer: string; location: string };
export type SiteRow = SiteInput & { id: string; updatedAt: string; deviceCount: number };

function toRow(site: Site, deviceCount = 0): SiteRow {
  return { id: site.id, name: site.name, customer: site.customer, location: site.location, updatedAt: site.updatedAt.toISOString(), deviceCount };
}

/** The organisation's sites' ids and names, by name: what a site filter or picker needs (no device counts). */
export async function siteNames(organisationId: string): Promise<Array<{ id: string; name: string }>> {
  const sites = await Site.findAll({ where: { organisationId }, attributes: ["id", "name"], order: [["name", "ASC"]] });
  return sites.map((site) => ({ id: site.id, name: site.name }));
}

export async function listSites(organisationId: string): Promise<SiteRow[]> {
  const [sites, counts] = await Promise.all([
    Site.findAll({ where: { organisationId }, order: [["name", "ASC"]] }),
    Device.count({ where: { organisationId }, group: ["siteId"] }),
  ]);
  const bySite = new Map(counts.map((row) => [String(row.siteId), Number(row.count)]));
  return sites.map((site) => toRow(site, bySite.get(site.id) ?? 0));
}

/**
 * Creates a site, inside the caller's transaction when given (a new device with its first
 * site). A taken name is refused beside `field`: "name" on the sites page.
 */
export async function createSite(organisationId: string, input: SiteInput, actor: AuditActor, options: { transaction?: Transaction; field?: string } = {}): Promise<SiteRow> {
  const { transaction, field = "name" } = options;
  // The site and its audit entry together, in the caller's transaction or one of its own.
  const create = async (within: Transaction) => {
    const site = await Site.create({ organisationId, ...input }, { transaction: within });
    await recordAuditEvent(actor, { organisationId, action: "site.created", targetType: "site", targetId: site.id, changes: { ...input } }, within);
    return toRow(site);
  };
  try {
    return await (transaction ? create(transaction) : getDatabase().transaction(create));
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal(`A site named "${input.name}" exists already.`, 409, { field });
    throw error;
  }
}

/** Updates a site of this organisation; null when there is no such site here. */
export async function updateSite(organisationId: string, siteId: string, input: SiteInput, actor: AuditActor): Promise<SiteRow | null> {
  const site = await Site.findOne({ where: { id: siteId, organisationId } });
  if (!site) return null;
  const changes: Record<string, { from: string; to: string }> = {};
  for (const key of ["name", "customer", "location"] as const) {
    if (site[key] !== input[key]) changes[key] = { from: site[key], to: input[key] };
  }
  if (Object.keys(changes).length === 0) return toRow(site);
  try {
    await getDatabase().transaction(async (transaction) => {
      await site.update(input, { transaction });
      await recordAuditEvent(actor, { organisationId, action: "site.updated", targetType: "site", targetId: site.id, changes }, transaction);
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new Refusal(`A site named "${input.name}" exists already.`, 409, { field: "name" });
    throw error;
  }
  return toRow(site);
}

export async function deleteSite(organisationId: string, siteId: string, actor: AuditActor): Promise<boolean> {
  const site = await Site.findOne({ where: { id: siteId, organisationId } });
  if (!site) return false;
  const devices = await Device.findAll({ where: { siteId }, attributes: ["name"] });
  if (devices.length > 0) throw new Refusal(`The site "${site.name}" still has devices: ${devices.map((device) => device.name).join(", ")}. Move or delete them first.`, 409);
  await getDatabase().transaction(async (transaction) => {
    await site.destroy({ transaction });
    await recordAuditEvent(actor, { organisationId, action: "site.deleted", targetType: "site", targetId: site.id, changes: { name: site.name } }, transaction);
  });
  return true;
}

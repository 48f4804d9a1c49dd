// The one home for "this organisation's device, at this revision, typed, with its compiled
// model" (docs/decisions/004). Every loader, action, service and resource route that needs a
// device goes through a DeviceRevisions instance; nothing else queries device revisions.
import { LRUCache } from "lru-cache";
import { col, ForeignKeyConstraintError, Op, QueryTypes, type Transaction } from "sequelize";
import { Device, DeviceRevision, RevisionAnalysisRecord, Site } from "#models/index.ts";
import { getDatabase } from "../db/database.server.ts";
import type { Finding, Outcome } from "../engine/index.ts";
import { keysOf } from "./finding-keys.ts";
import { analyseOffThread, POOL_THRESHOLD_ELEMENTS, type PooledAnalysis } from "../jobs/analysis-pool.server.ts";
import { currentRevision, summariseDocument, type ModelDocument, type SharedLibrary } from "../workspace/index.ts";
import { RevisionAnalysis } from "./revision-analysis.ts";
import { isUuid } from "../validation/ids.ts";
import { columnsOf, instanceOf } from "../db/rows.server.ts";
import { selectRows } from "../db/select.server.ts";

/** A revision's stored facts without its document (which the analysis holds, typed). */
export type RevisionRecord = Pick<DeviceRevision, "id" | "number" | "message" | "authorEmail" | "createdAt" | "summary" | "sharedObjects" | "analysisRecord">;

/** What the fleet pages show about a revision once the engine has analysed it. */
export type FleetSummary = { findingsBySeverity: Record<string, number>; worstOutsideOutcome: Outcome | null };

/**
 * A device's row in the fleet table, as stored: its current revision's facts and, once the
 * analysis has run, its stored summary. No document, no findings: what 500 large devices cost
 * to list is 500 short rows (issue 14).
 */
export type FleetRecord = {
  deviceId: string;
  name: string;
  siteId: string;
  siteName: string;
  revisionId: string;
  revisionNumber: number;
  createdAt: Date;
  authorEmail: string;
  /** The revision's element total as counted at save time (what decides the analysis pool). */
  elements: number;
  /** The stored summary; null while the revision's analysis has not been stored. */
  summary: FleetSummary | null;
  /** Whether each finding's key was stored with it (rows stored before keys were kept have none). */
  hasFindingKeys: boolean;
};

type FleetRecordRow = {
  device_id: string;
  name: string;
  site_id: string;
  site_name: string;
  revision_id: string;
  revision_number: number;
  created_at: Date | string;
  author_email: string;
  counts: Record<string, number> | null;
  analysed: boolean;
  findings_by_severity: Record<string, number> | null;
  worst_outside_outcome: Outcome | null;
  keys_stored: boolean;
};

/** Sum of the element counts kept at save time. */
function countedElements(counts: Record<string, number> | null | undefined): number {
  return Object.values(counts ?? {}).reduce((total, count) => total + count, 0);
}

/** A device of an organisation at one revision, with its site. */
export type DeviceAtRevision = {
  device: Device & { site: Site };
  revision: RevisionRecord;
  /** The device's own document, as stored (shared objects stay references). */
  document: ModelDocument;
  /** The shared objects the revision used, as they were when it was saved. */
  shared: SharedLibrary;
  /** The self-contained document the engine analyses and export writes. */
  effective: ModelDocument;
  analysis: RevisionAnalysis;
};

const RECORD_ATTRIBUTES = ["id", "number", "message", "authorEmail", "createdAt", "summary", "sharedObjects"] as const;
/** The revision's stored analysis, when there is one yet (LEFT JOIN). */
const ANALYSIS_ATTRIBUTES = ["revisionId", "findingsBySeverity", "worstOutsideOutcome", "findingKeys"];
const ANALYSIS_RECORD = { model: RevisionAnalysisRecord, as: "analysisRecord", required: false, attributes: ANALYSIS_ATTRIBUTES };

// The device of an organisation with its site, at its current revision (or :revisionNumber),
// with the revision's stored analysis when there is one: every device page's one query.
let deviceAtRevisionStatement: string | undefined;
function deviceAtRevisionQuery(): string {
  deviceAtRevisionStatement ??= `SELECT ${columnsOf(Device, "d")}, ${columnsOf(Site, "s")}, ${columnsOf(DeviceRevision, "r", RECORD_ATTRIBUTES)}, ${columnsOf(RevisionAnalysisRecord, "a", ANALYSIS_ATTRIBUTES)}
       FROM devices d
       JOIN sites s ON s.id = d.site_id
       JOIN device_revisions r ON r.device_id = d.id AND r.number = COALESCE($3::integer, d.current_revision_number)
       LEFT JOIN revision_analyses a ON a.revision_id = r.id
      WHERE d.id = $1 AND d.organisation_id = $2`;
  return deviceAtRevisionStatement;
}


export type DeviceRevisionsOptions = {
  /** Most revisions whose documents and compiled models are kept. */
  maxRevisions: number;
  /** Most model elements (rules, address entries, accounts…) kept across those revisions. */
  maxElements: number;
  /** Most revisions whose findings are kept (findings are small; the fleet page needs them all). */
  maxFindings: number;
};

/**
 * The bounds in production; docs/decisions/004 says why. Fleet reach asks every device of an
 * organisation at once, so the count allows a fleet of several hundred small devices to stay
 * compiled (about 60 KiB each warm, measured on the demo devices: docs/decisions/015); the
 * size bound still limits large models.
 */
export const DEFAULT_BOUNDS: DeviceRevisionsOptions = { maxRevisions: 1024, maxElements: 200_000, maxFindings: 4_000 };

/** A rough measure of a compiled model's memory: what the compiler walks. */
export function elementCount(document: ModelDocument): number {
  const entries = document.addresses.reduce((total, object) => total + object.entries.length, 0);
  return 1 + document.interfaces.length + document.inboundRules.length + document.accounts.length + entries + document.addressGroups.length + document.schedules.length;
}

export class DeviceRevisions {
  // Owned here and nowhere else: the analyses (documents, compiled models) least recently used
  // first out, bounded by count and by size; findings live longer in their own smaller cache.
  readonly #analyses: LRUCache<string, RevisionAnalysis>;
  readonly #findings: LRUCache<string, readonly Finding[]>;

  constructor(readonly bounds: DeviceRevisionsOptions = DEFAULT_BOUNDS) {
    this.#analyses = new LRUCache({ max: bounds.maxRevisions, maxSize: bounds.maxElements, sizeCalculation: (analysis) => Math.min(bounds.maxElements, elementCount(analysis.effective)) });
    this.#findings = new LRUCache({ max: bounds.maxFindings });
  }

  /**
   * The device of this organisation at its current revision (or the given one); null when the
   * id is not a UUID, the device belongs elsewhere, or the revision does not exist. One query
   * when the revision's analysis is cached, two otherwise.
   */
  async find(organisationId: string, deviceId: string, options: { revisionNumber?: number; transaction?: Transaction; lock?: boolean } = {}): Promise<DeviceAtRevision | null> {
    if (!isUuid(deviceId)) return null;
    // A revision number PostgreSQL's integer cannot hold (or not whole) names no revision: no query, and no cast error from the bound parameter.
    if (options.revisionNumber !== undefined && !(Number.isInteger(options.revisionNumber) && options.revisionNumber >= 1 && options.revisionNumber <= 2_147_483_647)) return null;
    const { transaction, lock } = options;
    if (lock && transaction) {
      // Lock the device row on its own first: a joined FOR UPDATE that waits for another save
      // re-checks the join against the new current revision number and would find nothing.
      const locked = await Device.findOne({ where: { id: deviceId, organisationId }, attributes: ["id"], transaction, lock: transaction.LOCK.UPDATE });
      if (!locked) return null;
    }
    const values = [deviceId, organisationId, options.revisionNumber ?? null];
    // Outside a transaction (every page's read) on a plain connection: Sequelize's own query path cost more than the query (docs/decisions/026).
    const [row] = transaction ? await getDatabase().query<Record<string, unknown>>(deviceAtRevisionQuery(), { type: QueryTypes.SELECT, bind: values, transaction }) : await selectRows(deviceAtRevisionQuery(), values);
    const device = row ? instanceOf(Device, row, "d") : null;
    const site = row ? instanceOf(Site, row, "s") : null;
    const record = row ? instanceOf(DeviceRevision, row, "r") : null;
    if (!device || !site || !record) return null;
    record.analysisRecord = instanceOf(RevisionAnalysisRecord, row, "a");
    device.site = site;
    device.revisions = [record];
    const [analysis] = await this.#analysesOf([record], transaction);
    return atRevision(device as Device & { site: Site }, record, analysis);
  }

  /** Every device of the organisation with its current revision's record (no document), by name. One query. */
  async currentRecords(organisationId: string, options: { transaction?: Transaction } = {}): Promise<Array<{ device: Device & { site: Site }; revision: RevisionRecord }>> {
    const devices = await Device.findAll({
      where: { organisationId },
      include: [
        { model: Site, as: "site", required: true },
        { model: DeviceRevision, as: "revisions", required: true, attributes: [...RECORD_ATTRIBUTES], where: { number: { [Op.eq]: col("Device.current_revision_number") } }, include: [ANALYSIS_RECORD] },
      ],
      order: [["name", "ASC"]],
      transaction: options.transaction,
    });
    return devices.flatMap((device) => (device.site && device.revisions?.[0] ? [{ device: device as Device & { site: Site }, revision: device.revisions[0] }] : []));
  }

  /** Every device of the organisation at its current revision, by name. Two queries at most. */
  async current(organisationId: string, options: { transaction?: Transaction } = {}): Promise<DeviceAtRevision[]> {
    const withRecords = (await this.currentRecords(organisationId, options)).map(({ device, revision }) => ({ device, record: revision }));
    const analyses = await this.#analysesOf(withRecords.map(({ record }) => record), options.transaction);
    return withRecords.map(({ device, record }, index) => atRevision(device, record, analyses[index]));
  }

  /**
   * Every revision of the organisation's device, oldest first, each with when it was saved and
   * its analysis (compiled only when first asked). Cached analyses are used as they are; the
   * others are read in one query and handed to the caller without entering the cache, so a long
   * history read once (a field check) does not push the pages' revisions out. [] for a device
   * that is not the organisation's.
   */
  async timeline(organisationId: string, deviceId: string): Promise<Array<{ number: number; savedAt: Date; analysis: RevisionAnalysis }>> {
    if (!isUuid(deviceId)) return [];
    const records = await DeviceRevision.findAll({
      where: { deviceId },
      attributes: ["id", "number", "createdAt"],
      include: [{ model: Device, required: true, attributes: [], where: { organisationId } }],
      order: [["number", "ASC"]],
    });
    // Taken from the cache first, so one evicted meanwhile is still in hand.
    const analyses = new Map<string, RevisionAnalysis>();
    for (const record of records) {
      const cached = this.#analyses.peek(record.id);
      if (cached) analyses.set(record.id, cached);
    }
    for (const [id, analysis] of await this.#read(records.filter((record) => !analyses.has(record.id)).map((record) => record.id))) analyses.set(id, analysis);
    return records.map((record) => {
      const analysis = analyses.get(record.id);
      // Only a revision deleted between the two queries (its device deleted) can be missing.
      if (!analysis) throw new Error(`revision ${record.id} disappeared while it was being read`);
      return { number: record.number, savedAt: record.createdAt, analysis };
    });
  }

  /** The numbered list of a device's revisions, newest first, without documents. */
  async history(deviceId: string): Promise<RevisionRecord[]> {
    return DeviceRevision.findAll({ where: { deviceId }, order: [["number", "DESC"]], attributes: [...RECORD_ATTRIBUTES] });
  }

  /**
   * The fleet summary of each revision, in order: the stored one, or — for a revision whose
   * background analysis has not run yet — computed now, stored (first writer wins) and returned.
   */
  async summariesOf(records: readonly RevisionRecord[]): Promise<FleetSummary[]> {
    const computed = await this.#completeMissing(records, (record) => !record.analysisRecord);
    return records.map((record) => {
      const stored = record.analysisRecord;
      return stored ? { findingsBySeverity: stored.findingsBySeverity, worstOutsideOutcome: stored.worstOutsideOutcome } : computed.get(record.id)!;
    });
  }

  /**
   * Whether a revision's analysis is still to come and heavy enough to leave to its job: nothing
   * stored yet, and a model the pool would take (sized by the element counts kept at save time).
   * The fleet page shows such a row as being analysed instead of analysing it in the request.
   */
  awaitsAnalysis(record: FleetRecord): boolean {
    return !record.summary && record.elements >= POOL_THRESHOLD_ELEMENTS;
  }

  /**
   * Every device of the organisation at its current revision, by name, with the stored summary:
   * one query reading short columns only (never a document, the findings or their keys, which
   * for a large device are hundreds of kilobytes each).
   */
  async fleetRecords(organisationId: string): Promise<FleetRecord[]> {
    const rows = await getDatabase().query<FleetRecordRow>(
      `SELECT d.id AS device_id, d.name, d.site_id, s.name AS site_name,
              r.id AS revision_id, r.number AS revision_number, r.created_at, r.author_email, r.summary -> 'counts' AS counts,
              a.revision_id IS NOT NULL AS analysed, a.findings_by_severity, a.worst_outside_outcome, a.finding_keys IS NOT NULL AS keys_stored
         FROM devices d
         JOIN sites s ON s.id = d.site_id
         JOIN device_revisions r ON r.device_id = d.id AND r.number = d.current_revision_number
         LEFT JOIN revision_analyses a ON a.revision_id = r.id
        WHERE d.organisation_id = :organisationId
        ORDER BY d.name ASC`,
      { type: QueryTypes.SELECT, replacements: { organisationId } },
    );
    return rows.map((row) => ({
      deviceId: row.device_id,
      name: row.name,
      siteId: row.site_id,
      siteName: row.site_name,
      revisionId: row.revision_id,
      revisionNumber: row.revision_number,
      createdAt: new Date(row.created_at),
      authorEmail: row.author_email,
      elements: countedElements(row.counts),
      summary: row.analysed && row.findings_by_severity ? { findingsBySeverity: row.findings_by_severity, worstOutsideOutcome: row.worst_outside_outcome } : null,
      hasFindingKeys: row.keys_stored,
    }));
  }

  /**
   * The fleet summary of revisions by id that have none stored yet: computed now (large models on
   * the analysis pool) and stored, as summariesOf does.
   */
  async summariesByRevisionId(revisionIds: readonly string[]): Promise<Map<string, FleetSummary>> {
    const computed = await this.#completeMissing(
      revisionIds.map((id) => ({ id })),
      () => true,
    );
    return new Map([...computed].map(([id, { findingsBySeverity, worstOutsideOutcome }]) => [id, { findingsBySeverity, worstOutsideOutcome }]));
  }

  /**
   * The severity of each of these finding keys in these revisions, as [key, severity] pairs per
   * revision id (a key the revision does not report is absent; a key reported twice appears
   * twice). The keys are matched inside PostgreSQL, so only the matches travel: the fleet table
   * asks this for the findings a dismissal takes out of its counts. A revision whose keys were
   * not stored is analysed now, and its keys stored.
   */
  async severitiesOfKeys(wanted: ReadonlyArray<{ revisionId: string; keys: readonly string[]; hasFindingKeys: boolean }>): Promise<Map<string, Array<[string, string]>>> {
    const found = new Map<string, Array<[string, string]>>();
    const add = (revisionId: string, key: string, severity: string) => found.set(revisionId, [...(found.get(revisionId) ?? []), [key, severity]]);
    const stored = wanted.filter((entry) => entry.hasFindingKeys).flatMap((entry) => entry.keys.map((key) => ({ revisionId: entry.revisionId, key })));
    if (stored.length > 0) {
      const rows = await getDatabase().query<{ revision_id: string; key: string; severity: string }>(
        `SELECT a.revision_id, k.pair ->> 0 AS key, k.pair ->> 1 AS severity
           FROM unnest(ARRAY[:revisionIds]::uuid[], ARRAY[:keys]::text[]) AS w(revision_id, key)
           JOIN revision_analyses a ON a.revision_id = w.revision_id
           CROSS JOIN LATERAL jsonb_array_elements(a.finding_keys) AS k(pair)
          WHERE k.pair ->> 0 = w.key`,
        { type: QueryTypes.SELECT, replacements: { revisionIds: stored.map((entry) => entry.revisionId), keys: stored.map((entry) => entry.key) } },
      );
      for (const row of rows) add(row.revision_id, row.key, row.severity);
    }
    const missing = wanted.filter((entry) => !entry.hasFindingKeys);
    if (missing.length > 0) {
      const computed = await this.#completeMissing(
        missing.map((entry) => ({ id: entry.revisionId })),
        () => true,
      );
      for (const entry of missing) {
        const keys = new Set(entry.keys);
        for (const [key, severity] of computed.get(entry.revisionId)?.findingKeys ?? []) if (keys.has(key)) add(entry.revisionId, key, severity);
      }
    }
    return found;
  }

  /**
   * The findings of each revision, in order: kept in memory, else as the analysis stored them
   * (one query for all), else computed now — large models on the analysis pool — and stored.
   */
  async storedFindingsOf(records: readonly RevisionRecord[]): Promise<Array<readonly Finding[]>> {
    const known = new Map<string, readonly Finding[]>();
    for (const record of records) {
      const cached = this.#findings.get(record.id);
      if (cached) known.set(record.id, cached);
    }
    const unknown = records.filter((record) => !known.has(record.id) && record.analysisRecord?.findingKeys);
    if (unknown.length > 0) {
      const rows = await RevisionAnalysisRecord.findAll({ where: { revisionId: unknown.map((record) => record.id) }, attributes: ["revisionId", "findings"] });
      for (const row of rows) {
        if (!row.findings) continue;
        known.set(row.revisionId, row.findings);
        this.#findings.set(row.revisionId, row.findings);
      }
    }
    const computed = await this.#completeMissing(records, (record) => !known.has(record.id));
    return records.map((record) => known.get(record.id) ?? computed.get(record.id)!.findings);
  }

  /** The findings of a device at a revision (see storedFindingsOf). */
  async findingsFor(device: DeviceAtRevision): Promise<readonly Finding[]> {
    const [found] = await this.storedFindingsOf([device.revision]);
    return found;
  }

  /**
   * Analyses a saved revision and stores its findings and fleet summary (the background job's
   * work); seeds the caches. False when it was analysed already (or is gone): nothing is done twice.
   */
  async analyseSaved(revisionId: string): Promise<boolean> {
    if (!isUuid(revisionId)) return false;
    const record = await DeviceRevision.findByPk(revisionId, { attributes: [...RECORD_ATTRIBUTES, "deviceId"], include: [ANALYSIS_RECORD] });
    if (!record || record.analysisRecord?.findingKeys) return false;
    // The revision it was saved on, when its compiled model is still in memory: the new one is
    // then compiled on it and re-uses what the edit left alone.
    const previous = await DeviceRevision.findOne({ where: { deviceId: record.deviceId, number: { [Op.lt]: record.number } }, order: [["number", "DESC"]], attributes: ["id"] });
    const basis = previous ? this.#analyses.peek(previous.id) : undefined;
    const [analysis] = await this.#analysesOf([record], undefined, basis);
    await this.#analyseAndStore(record.id, analysis);
    return true;
  }

  /** Analyses the records `missing` selects (documents read in one query) and stores each; by revision id. */
  async #completeMissing<Record extends { id: string }>(records: readonly Record[], missing: (record: Record) => boolean): Promise<Map<string, PooledAnalysis>> {
    const computed = new Map<string, PooledAnalysis>();
    const selected = records.filter(missing);
    if (selected.length === 0) return computed;
    const analyses = await this.#analysesOf(selected);
    // One after another: the pool's threads are shared with every other request.
    for (const [index, record] of selected.entries()) computed.set(record.id, await this.#analyseAndStore(record.id, analyses[index]));
    return computed;
  }

  /**
   * Findings and fleet summary of one revision: on this thread when its compiled model is in
   * memory or the model is small, else on the analysis pool; then stored (the same answer
   * whoever writes it, so a second writer changes nothing).
   */
  async #analyseAndStore(revisionId: string, analysis: RevisionAnalysis): Promise<PooledAnalysis> {
    const known = this.#findings.get(revisionId);
    let result: PooledAnalysis;
    if (analysis.isCompiled || elementCount(analysis.effective) < POOL_THRESHOLD_ELEMENTS) {
      const found = known ?? analysis.findings;
      const { findingsBySeverity, worstOutsideOutcome } = summariseDocument(analysis.effective, analysis.compiled, found);
      result = { findings: [...found], findingKeys: keysOf(found), findingsBySeverity, worstOutsideOutcome };
    } else {
      result = await analyseOffThread(analysis.effective);
    }
    this.#findings.set(revisionId, result.findings);
    try {
      await RevisionAnalysisRecord.bulkCreate([{ revisionId, ...result }], { updateOnDuplicate: ["findings", "findingKeys"] });
    } catch (error) {
      // The device (and with it the revision) was deleted while the analysis ran: nothing to keep.
      if (!(error instanceof ForeignKeyConstraintError)) throw error;
      this.#findings.delete(revisionId);
    }
    return result;
  }

  /** The findings of a revision whose compiled model is in hand (the trace and effect pages), kept longer than the model. */
  findingsOf(device: DeviceAtRevision): readonly Finding[] {
    const known = this.#findings.get(device.revision.id);
    if (known) return known;
    const computed = device.analysis.findings;
    this.#findings.set(device.revision.id, computed);
    return computed;
  }

  /** Cached analyses, for tests and the contributor guide's numbers. */
  get cachedRevisions(): number {
    return this.#analyses.size;
  }

  /** The analyses of revisions read from the database in one query (none when no id is given), not cached. */
  async #read(ids: readonly string[], transaction?: Transaction, basis?: RevisionAnalysis): Promise<Map<string, RevisionAnalysis>> {
    const read = new Map<string, RevisionAnalysis>();
    if (ids.length === 0) return read;
    const rows = await DeviceRevision.findAll({ where: { id: [...ids] }, attributes: ["id", "document", "sharedObjects"], transaction });
    for (const row of rows) {
      const { document, shared } = currentRevision(row.document, row.sharedObjects);
      read.set(row.id, new RevisionAnalysis(document, shared, { findings: this.#findings.get(row.id), basis }));
    }
    return read;
  }

  async #analysesOf(records: ReadonlyArray<{ id: string }>, transaction?: Transaction, basis?: RevisionAnalysis): Promise<RevisionAnalysis[]> {
    // Kept in hand as well as cached: more records than the cache holds (a large fleet) would evict each other.
    const read = new Map<string, RevisionAnalysis>();
    for (const record of records) {
      const cached = this.#analyses.get(record.id);
      if (cached) read.set(record.id, cached);
    }
    for (const [id, analysis] of await this.#read(records.filter((record) => !read.has(record.id)).map((record) => record.id), transaction, basis)) {
      read.set(id, analysis);
      this.#analyses.set(id, analysis);
    }
    return records.map((record) => {
      const analysis = read.get(record.id);
      // Only a revision deleted between the two queries (its device deleted) can be missing.
      if (!analysis) throw new Error(`revision ${record.id} disappeared while it was being read`);
      return analysis;
    });
  }
}

function atRevision(device: Device & { site: Site }, record: RevisionRecord, analysis: RevisionAnalysis): DeviceAtRevision {
  return { device, revision: record, document: analysis.document, shared: analysis.shared, effective: analysis.effective, analysis };
}

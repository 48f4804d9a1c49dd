// The one home for "this organisation's device, at this revision, typed, with its compiled
// model" (docs/decisions/004). Every loader, action, service and resource route that needs a
// device goes through a DeviceRevisions instance; nothing else queries device revisions.
import { LRUCache } from "lru-cache";
import { col, ForeignKeyConstraintError, Op, type Transaction } from "sequelize";
import { Device, DeviceRevision, RevisionAnalysisRecord, Site } from "#models/index.ts";
import type { Finding, Outcome } from "../engine/index.ts";
import { keysOf } from "./finding-keys.ts";
import { analyseOffThread, POOL_THRESHOLD_ELEMENTS, type PooledAnalysis } from "../jobs/analysis-pool.server.ts";
import { currentRevision, summariseDocument, type ModelDocument, type SharedLibrary } from "../workspace/index.ts";
import { RevisionAnalysis } from "./revision-analysis.ts";
import { isUuid } from "../validation/ids.ts";

/** A revision's stored facts without its document (which the analysis holds, typed). */
export type RevisionRecord = Pick<DeviceRevision, "id" | "number" | "message" | "authorEmail" | "createdAt" | "summary" | "sharedObjects" | "analysisRecord">;

/** What the fleet pages show about a revision once the engine has analysed it. */
export type FleetSummary = { findingsBySeverity: Record<string, number>; worstOutsideOutcome: Outcome | null };

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
const ANALYSIS_RECORD = { model: RevisionAnalysisRecord, as: "analysisRecord", required: false, attributes: ["revisionId", "findingsBySeverity", "worstOutsideOutcome", "findingKeys"] };


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
    const { transaction, lock } = options;
    if (lock && transaction) {
      // Lock the device row on its own first: a joined FOR UPDATE that waits for another save
      // re-checks the join against the new current revision number and would find nothing.
      const locked = await Device.findOne({ where: { id: deviceId, organisationId }, attributes: ["id"], transaction, lock: transaction.LOCK.UPDATE });
      if (!locked) return null;
    }
    const device = await Device.findOne({
      where: { id: deviceId, organisationId },
      include: [
        { model: Site, as: "site", required: true },
        {
          model: DeviceRevision,
          as: "revisions",
          required: true,
          attributes: [...RECORD_ATTRIBUTES],
          where: { number: options.revisionNumber ?? { [Op.eq]: col("Device.current_revision_number") } },
          include: [ANALYSIS_RECORD],
        },
      ],
      transaction,
    });
    const record = device?.revisions?.[0];
    if (!device?.site || !record) return null;
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
  awaitsAnalysis(record: RevisionRecord): boolean {
    if (record.analysisRecord) return false;
    const size = Object.values(record.summary?.counts ?? {}).reduce((total, count) => total + count, 0);
    return size >= POOL_THRESHOLD_ELEMENTS;
  }

  /**
   * Each revision's findings as [key, severity] pairs, in order, from what the analysis stored:
   * the fleet table counts active findings from these without reading any document. A revision
   * not analysed yet (or stored before keys were kept) is analysed now and stored.
   */
  async findingKeysOf(records: readonly RevisionRecord[]): Promise<Array<Array<[string, string]>>> {
    const computed = await this.#completeMissing(records, (record) => !record.analysisRecord?.findingKeys);
    return records.map((record) => record.analysisRecord?.findingKeys ?? computed.get(record.id)!.findingKeys);
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
  async #completeMissing(records: readonly RevisionRecord[], missing: (record: RevisionRecord) => boolean): Promise<Map<string, PooledAnalysis>> {
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

  async #analysesOf(records: readonly RevisionRecord[], transaction?: Transaction, basis?: RevisionAnalysis): Promise<RevisionAnalysis[]> {
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

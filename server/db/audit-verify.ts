// `npm run audit:verify [-- options]` (docs/decisions/020): walks the audit log's hash chains and
// names the first broken entry of each; exit 0 when every chain is intact, 1 when one is broken,
// 2 when it could not check. It connects as the runtime role (DATABASE_URL) and only reads.
import { readFileSync, writeFileSync } from "node:fs";
import { parseArgs } from "node:util";
import { Sequelize } from "sequelize";
import { z } from "zod";
import { plural } from "../engine/format.ts";
import { ACCOUNT_CHAIN, anchorsOf, verifyAuditChains, type ChainAnchors } from "../services/audit-chain.server.ts";
import { isUuid } from "../validation/ids.ts";

const USAGE = `usage: npm run audit:verify [-- [--organisation ID | --account] [--anchors FILE] [--record FILE] [--json]]
  --organisation ID  only that organisation's chain
  --account          only the chain of entries that belong to no organisation
  --anchors FILE     also check the heads recorded earlier with --record (finds a rewritten chain)
  --record FILE      after a clean check, write each chain's head to FILE (keep it off this machine)
  --json             the report as JSON`;

const AnchorsSchema = z.record(z.uuid(), z.object({ seq: z.number().int().positive(), hash: z.string().regex(/^[0-9a-f]{64}$/) }));

function fail(message: string): never {
  console.error(`${message}\n${USAGE}`);
  process.exit(2);
}

let values: { organisation?: string; account?: boolean; anchors?: string; record?: string; json?: boolean };
try {
  ({ values } = parseArgs({
    options: { organisation: { type: "string" }, account: { type: "boolean" }, anchors: { type: "string" }, record: { type: "string" }, json: { type: "boolean" } },
    strict: true,
  }));
} catch (error) {
  fail(error instanceof Error ? error.message : String(error));
}
if (values.organisation !== undefined && !isUuid(values.organisation)) fail(`--organisation takes an organisation's id (a UUID), not "${values.organisation}"`);
if (values.organisation && values.account) fail("give --organisation or --account, not both");
const url = process.env.DATABASE_URL;
if (!url) fail("DATABASE_URL is not set: run this through `npm run audit:verify`, which sets it for the local database.");

let anchors: ChainAnchors | undefined;
if (values.anchors) {
  try {
    anchors = AnchorsSchema.parse(JSON.parse(readFileSync(values.anchors, "utf8")));
  } catch (error) {
    fail(`cannot read the anchors in ${values.anchors}: ${error instanceof Error ? error.message : String(error)}`);
  }
}

const sequelize = new Sequelize(url, { dialect: "postgres", logging: false });
try {
  const chain = values.account ? ACCOUNT_CHAIN : values.organisation;
  const report = await verifyAuditChains(sequelize, { chain, anchors });
  if (values.json) {
    console.log(JSON.stringify(report, null, 2));
  } else {
    const label = (key: string) => (key === ACCOUNT_CHAIN ? "entries of no organisation" : `organisation ${report.chains.find((c) => c.chain === key)?.organisationName ?? "(deleted)"} ${key}`);
    for (const head of report.chains) {
      const broken = report.breaks.find((item) => item.chain === head.chain);
      console.log(`${broken ? "✗" : "✓"} ${label(head.chain)}: ${broken ? broken.message : `${plural(head.entries, { one: "entry", other: "entries" })} intact, head at place ${head.seq} ${head.hash.slice(0, 16)}…`}`);
    }
    for (const item of report.breaks.filter((b) => !report.chains.some((c) => c.chain === b.chain))) console.log(`✗ ${label(item.chain)}: ${item.message}`);
    console.log(report.breaks.length === 0
      ? `Audit log intact: ${plural(report.entries, { one: "entry", other: "entries" })} in ${plural(report.chains.length, { one: "chain", other: "chains" })}.`
      : `Audit log BROKEN: ${report.breaks.length} of ${plural(report.chains.length, { one: "chain", other: "chains" })}. Keep this database as it is and compare with your latest backup.`);
  }
  if (values.record) {
    if (report.breaks.length > 0) console.error(`not recording anchors: the log is broken`);
    else writeFileSync(values.record, `${JSON.stringify(anchorsOf(report), null, 2)}\n`);
  }
  process.exitCode = report.breaks.length === 0 ? 0 : 1;
} catch (error) {
  console.error(`could not verify the audit log: ${error instanceof Error ? error.message : String(error)}`);
  process.exitCode = 2;
} finally {
  await sequelize.close();
}

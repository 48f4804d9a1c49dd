// Hand-written joins that still hand out model instances, for the queries every request runs
// (the session with its user and memberships; the device in the URL with its site and revision):
// Sequelize's include machinery (building the join, grouping the rows back) cost more CPU than
// PostgreSQL spent answering them (measured: ≈ 20 % of the trace JSON route's time).
import type { Model, ModelStatic } from "sequelize";

const selectLists = new Map<string, string>();

/** `"alias"."column" AS "alias.attribute"` for every attribute of the model (or those named), for a SELECT list. */
export function columnsOf(model: ModelStatic<Model>, alias: string, only?: readonly string[]): string {
  const key = `${model.name}:${alias}:${only?.join(",") ?? "*"}`;
  let list = selectLists.get(key);
  if (list === undefined) {
    list = Object.entries(model.getAttributes())
      .filter(([attribute]) => !only || only.includes(attribute))
      .map(([attribute, definition]) => `"${alias}"."${definition.field ?? attribute}" AS "${alias}.${attribute}"`)
      .join(", ");
    selectLists.set(key, list);
  }
  return list;
}

/**
 * The instance for the row's `alias.` columns (those columnsOf selected), built as a finder
 * builds what it found (not new, values as PostgreSQL's driver parsed them); null when a left
 * join found no row (its primary key null).
 */
export function instanceOf<M extends Model>(model: ModelStatic<M>, row: Record<string, unknown>, alias: string): M | null {
  const { primaryKey, columns } = rowColumnsOf(model, alias);
  const key = row[primaryKey];
  if (key === null || key === undefined) return null;
  const values: Record<string, unknown> = {};
  for (const [attribute, column] of columns) if (column in row) values[attribute] = row[column];
  return model.build(values as M["_creationAttributes"], { isNewRecord: false, raw: true });
}

/** Each attribute's `alias.attribute` column name, worked out once per model and alias (every request reads a session). */
const rowColumns = new Map<string, { primaryKey: string; columns: Array<[string, string]> }>();
function rowColumnsOf(model: ModelStatic<Model>, alias: string): { primaryKey: string; columns: Array<[string, string]> } {
  const cacheKey = `${model.name}:${alias}`;
  let found = rowColumns.get(cacheKey);
  if (found === undefined) {
    found = { primaryKey: `${alias}.${model.primaryKeyAttribute}`, columns: Object.keys(model.getAttributes()).map((attribute) => [attribute, `${alias}.${attribute}`]) };
    rowColumns.set(cacheKey, found);
  }
  return found;
}

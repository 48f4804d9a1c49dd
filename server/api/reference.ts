// The API reference page's content, read from the OpenAPI document itself (never written by
// hand): the operations by tag with their parameters, body fields and answers, the named
// schemas field by field, and the problem types. Pure and serialisable; the page only draws it.
import { PROBLEMS, type ProblemCode } from "./problems.ts";

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type JsonObject = { [key: string]: Json };

const isObject = (value: unknown): value is JsonObject => typeof value === "object" && value !== null && !Array.isArray(value);
const text = (value: unknown): string => (typeof value === "string" ? value : "");
const objectAt = (value: unknown, key: string): JsonObject => (isObject(value) && isObject(value[key]) ? value[key] : {});

/** One field of a schema: its dotted name, its type in words, whether it must be there, what it means. */
export type ReferenceField = { name: string; type: string; ref: string | null; required: boolean; description: string };
export type ReferenceParameter = ReferenceField & { in: string };
export type ReferenceResponse = { status: string; description: string; mediaType: string; schema: string | null; schemaRef: string | null };
export type ReferenceOperation = {
  anchor: string;
  method: string;
  path: string;
  summary: string;
  description: string;
  scope: string;
  role: string;
  parameters: ReferenceParameter[];
  body: { schema: string | null; fields: ReferenceField[] } | null;
  responses: ReferenceResponse[];
};
export type ReferenceGroup = { tag: string; description: string; operations: ReferenceOperation[] };
export type ReferenceSchema = { name: string; anchor: string; description: string; fields: ReferenceField[] };
export type ApiReference = {
  title: string;
  version: string;
  description: string;
  basePath: string;
  groups: ReferenceGroup[];
  schemas: ReferenceSchema[];
  problems: Array<{ code: ProblemCode; anchor: string; status: number; title: string; explains: string }>;
};

const refName = (schema: JsonObject): string | null => {
  const ref = text(schema.$ref);
  return ref.startsWith("#/components/schemas/") ? ref.slice("#/components/schemas/".length) : null;
};

/** A schema's type in words: "string (uuid)", "integer 1–65535", "one of: allow, deny", "array of Device". */
export function typeWords(schema: JsonObject): string {
  const ref = refName(schema);
  if (ref) return ref;
  if (Array.isArray(schema.enum)) {
    const words = schema.enum.map((value) => (value === null ? "null" : String(value)));
    return words.length === 1 ? `always ${words[0]}` : `one of: ${words.join(", ")}`;
  }
  for (const key of ["anyOf", "oneOf"] as const) {
    const options = schema[key];
    if (Array.isArray(options)) return options.filter(isObject).map(typeWords).join(" or ");
  }
  const types = Array.isArray(schema.type) ? schema.type.map(String) : schema.type ? [String(schema.type)] : [];
  const nullable = types.includes("null");
  const main = types.find((type) => type !== "null") ?? (isObject(schema.properties) ? "object" : "any JSON");
  let words = main;
  if (main === "array") words = `array of ${typeWords(isObject(schema.items) ? schema.items : {})}`;
  if (main === "string" && schema.format) words = `string (${text(schema.format)})`;
  if ((main === "integer" || main === "number") && (typeof schema.minimum === "number" || typeof schema.maximum === "number")) words = `${main} ${schema.minimum ?? "…"}–${schema.maximum ?? "…"}`;
  if (main === "string" && (typeof schema.minLength === "number" || typeof schema.maxLength === "number")) words = `${words}, ${schema.minLength ?? 0}–${schema.maxLength ?? "…"} characters`;
  if (main === "object" && isObject(schema.additionalProperties) && !isObject(schema.properties)) words = `map of ${typeWords(schema.additionalProperties)}`;
  if (schema.default !== undefined) words = `${words}, default ${JSON.stringify(schema.default)}`;
  return nullable ? `${words} or null` : words;
}

/** The fields of an object schema, nested ones with dotted names (array items as `name[]`), up to a depth. */
export function fieldsOf(schema: JsonObject, prefix = "", depth = 0): ReferenceField[] {
  if (refName(schema) || depth > 4) return [];
  const properties = isObject(schema.properties) ? schema.properties : {};
  const required = new Set(Array.isArray(schema.required) ? schema.required.map(String) : []);
  const fields: ReferenceField[] = [];
  for (const [key, value] of Object.entries(properties)) {
    if (!isObject(value)) continue;
    const name = `${prefix}${key}`;
    const ref = refName(value) ?? (isObject(value.items) ? refName(value.items) : null);
    fields.push({ name, type: typeWords(value), ref, required: required.has(key), description: text(value.description) });
    if (isObject(value.properties)) fields.push(...fieldsOf(value, `${name}.`, depth + 1));
    if (isObject(value.items) && isObject(value.items.properties)) fields.push(...fieldsOf(value.items, `${name}[].`, depth + 1));
  }
  return fields;
}

const anchorOf = (value: string) => value.toLowerCase().replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "");

export function apiReference(document: unknown): ApiReference {
  const info = objectAt(document, "info");
  const paths = objectAt(document, "paths");
  const schemas = objectAt(objectAt(document, "components"), "schemas");
  const tags = isObject(document) && Array.isArray(document.tags) ? document.tags.filter(isObject) : [];
  const servers = isObject(document) && Array.isArray(document.servers) ? document.servers.filter(isObject) : [];
  const groups = new Map<string, ReferenceGroup>(tags.map((tag) => [text(tag.name), { tag: text(tag.name), description: text(tag.description), operations: [] }]));
  for (const [path, item] of Object.entries(paths)) {
    if (!isObject(item)) continue;
    for (const [method, operation] of Object.entries(item)) {
      if (!isObject(operation)) continue;
      const tag = Array.isArray(operation.tags) ? text(operation.tags[0]) : "";
      const group = groups.get(tag) ?? { tag, description: "", operations: [] };
      groups.set(tag, group);
      const parameters = (Array.isArray(operation.parameters) ? operation.parameters.filter(isObject) : []).map((parameter) => {
        const schema = objectAt(parameter, "schema");
        return { name: text(parameter.name), in: text(parameter.in), type: typeWords(schema), ref: null, required: parameter.required === true, description: text(parameter.description) || text(schema.description) };
      });
      const bodySchema = objectAt(objectAt(objectAt(objectAt(operation, "requestBody"), "content"), "application/json"), "schema");
      const bodyName = refName(bodySchema);
      const bodyFields = bodyName ? fieldsOf(objectAt(schemas, bodyName)) : fieldsOf(bodySchema);
      const responses = Object.entries(objectAt(operation, "responses")).flatMap(([status, response]) => {
        if (!isObject(response)) return [];
        const [mediaType, media] = Object.entries(objectAt(response, "content"))[0] ?? ["", {}];
        const schema = objectAt(media, "schema");
        const schemaRef = refName(schema);
        return [{ status, description: text(response.description), mediaType, schema: mediaType ? typeWords(schema) : null, schemaRef }];
      });
      group.operations.push({
        anchor: anchorOf(text(operation.operationId) || `${method}-${path}`),
        method: method.toUpperCase(),
        path,
        summary: text(operation.summary),
        description: text(operation.description),
        scope: text(operation["x-sallyport-scope"]) || "none",
        role: text(operation["x-sallyport-role"]),
        parameters,
        body: isObject(operation.requestBody) ? { schema: bodyName, fields: bodyFields } : null,
        responses,
      });
    }
  }
  return {
    title: text(info.title),
    version: text(info.version),
    description: text(info.description),
    basePath: text(servers[0]?.url),
    groups: [...groups.values()].filter((group) => group.operations.length > 0),
    schemas: Object.entries(schemas).flatMap(([name, schema]) => (isObject(schema) ? [{ name, anchor: `schema-${anchorOf(name)}`, description: text(schema.description), fields: fieldsOf(schema) }] : [])),
    problems: (Object.keys(PROBLEMS) as ProblemCode[]).map((code) => ({ code, anchor: `problem-${code}`, status: PROBLEMS[code].status, title: PROBLEMS[code].title, explains: PROBLEMS[code].explains })),
  };
}

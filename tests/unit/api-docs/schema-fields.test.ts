import { fieldsOf, typeOf, type JsonSchema } from "@/components/api-docs/schema-fields";
import { openApiDocument } from "@/lib/api-docs/document";

// What the API reference page shows of a schema: field names, types, limits.

type Doc = { paths: Record<string, Record<string, { requestBody?: { content: Record<string, { schema: JsonSchema }> }; responses: Record<string, { content?: Record<string, { schema: JsonSchema }> }> }>>; components: { schemas: Record<string, JsonSchema> } };
const doc = openApiDocument() as unknown as Doc;
const schemas = doc.components.schemas;

describe("fields of the document's schemas, as the reference page lists them", () => {
  it("lists a body's fields with their types, limits and defaults", () => {
    const body = doc.paths["/api/w/{slug}/runs"].post.requestBody?.content["application/json"].schema;
    const rows = fieldsOf(body, schemas);
    const permutations = rows.find((r) => r.name === "permutations");
    expect(permutations).toMatchObject({ type: "integer", required: false });
    expect(permutations?.notes).toEqual(expect.arrayContaining(["99 to 99999", "default 999"]));
    expect(rows.find((r) => r.name === "correction")?.type).toBe('one of "none", "bonferroni", "fdr"');
    expect(rows.map((r) => r.name)).toContain("panelVersionId");
  });

  it("names referenced schemas and lists of them", () => {
    const answer = doc.paths["/api/w/{slug}/runs"].get.responses["200"].content?.["application/json"].schema;
    expect(fieldsOf(answer, schemas)).toEqual([expect.objectContaining({ name: "runs", type: "list of RunSummary" })]);
    expect(typeOf({ anyOf: [{ type: "string" }, { type: "null" }] }, schemas)).toBe("string or null");
  });

  it("shows every variant's fields of a union body (a panel's column mapping per layout) once", () => {
    const body = doc.paths["/api/w/{slug}/intake/panels"].post.requestBody?.content["application/json"].schema;
    const names = fieldsOf(body, schemas).map((r) => r.name);
    expect(names).toEqual(expect.arrayContaining(["uploadId", "mapping"]));
    expect(new Set(names).size).toBe(names.length);
  });
});

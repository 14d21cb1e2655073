import { execFileSync } from "node:child_process";
import { readdirSync, type Dirent } from "node:fs";
import path from "node:path";
import { API_ROUTES, buildOpenApiDocument, openApiDocument, operationIdOf, UNDOCUMENTED_ROUTES } from "@/lib/api-docs/document";
import { AREAS, HTTP_METHODS, member, rolesFor } from "@/lib/api-docs/define";

// The OpenAPI document (lib/api-docs) is valid OpenAPI 3.1, and it describes
// exactly the route handlers on disk: every exported method of every
// app/api/**/route.ts is documented, and nothing documented is missing there.

const ROOT = path.resolve(__dirname, "../../..");

/** Every route.ts under app/api as "METHOD /api/path/{param}", read from the files' exports. */
async function routesOnDisk(): Promise<{ key: string; file: string }[]> {
  const dir = path.join(ROOT, "app", "api");
  const files = (readdirSync(dir, { recursive: true, withFileTypes: true }) as Dirent[])
    .filter((e) => e.isFile() && /^route\.(ts|tsx|js)$/.test(e.name))
    .map((e) => path.relative(ROOT, path.join(e.parentPath, e.name)).split(path.sep).join("/"))
    .sort();
  const found: { key: string; file: string }[] = [];
  for (const file of files) {
    if (UNDOCUMENTED_ROUTES.some((u) => u.file === file)) continue;
    const apiPath = `/${path.posix.dirname(file).replace(/^app\//, "")}`.replace(/\[([^\]]+)\]/g, "{$1}");
    const mod = (await import(`@/${file.replace(/\.(ts|tsx|js)$/, "")}`)) as Record<string, unknown>;
    for (const method of HTTP_METHODS) if (typeof mod[method] === "function") found.push({ key: `${method} ${apiPath}`, file });
  }
  return found;
}

function validate(document: unknown): { valid: boolean; version: string; errors: unknown } {
  const out = execFileSync(process.execPath, [path.join(__dirname, "validate-openapi.mjs")], { cwd: ROOT, input: JSON.stringify(document), encoding: "utf8" });
  return JSON.parse(out) as { valid: boolean; version: string; errors: unknown };
}

describe("the OpenAPI document", () => {
  it("is valid OpenAPI 3.1", () => {
    const result = validate(openApiDocument());
    expect(result.errors).toBeNull();
    expect(result).toMatchObject({ valid: true, version: "3.1" });
  });

  it("would catch an invalid document (the validator is really called)", () => {
    const broken = { ...openApiDocument(), paths: { "/api/x": { get: { responses: { 200: { content: {} } } } } } };
    expect(validate(broken).valid).toBe(false);
  });

  it("documents every route handler under app/api, and nothing that is not on disk", async () => {
    const onDisk = await routesOnDisk();
    const documented = API_ROUTES.map((r) => `${r.method} ${r.path}`);
    const missing = onDisk.filter((r) => !documented.includes(r.key)).map((r) => `${r.key} (${r.file})`);
    const stale = documented.filter((key) => !onDisk.some((r) => r.key === key));
    if (missing.length) throw new Error(`Not in the API document:\n  ${missing.join("\n  ")}\nAdd an entry for each to its area's file in lib/api-docs/ (docs/api-reference.md).`);
    expect(stale).toEqual([]);
    expect(onDisk.length).toBeGreaterThan(40);
  });

  it("excludes only routes that exist, each with a reason", async () => {
    for (const u of UNDOCUMENTED_ROUTES) {
      expect(u.reason.length).toBeGreaterThan(20);
      await expect(import(`@/${u.file.replace(/\.ts$/, "")}`)).resolves.toBeDefined();
    }
  });

  it("has every operation in the document's paths once, with a unique operation id and a known area", () => {
    const doc = openApiDocument();
    const ops = Object.entries(doc.paths ?? {}).flatMap(([p, item]) =>
      Object.entries(item as Record<string, { operationId?: string }>).map(([method, op]) => ({ key: `${method.toUpperCase()} ${p}`, id: op.operationId })),
    );
    expect(ops.map((o) => o.key).sort()).toEqual(API_ROUTES.map((r) => `${r.method} ${r.path}`).sort());
    expect(new Set(ops.map((o) => o.id)).size).toBe(ops.length);
    for (const route of API_ROUTES) expect(AREAS.map((a) => a.key)).toContain(route.area);
  });

  it("names every {param} of a path among its parameters", () => {
    const doc = openApiDocument();
    for (const [p, item] of Object.entries(doc.paths ?? {})) {
      const names = [...p.matchAll(/\{(\w+)\}/g)].map((m) => m[1]);
      for (const op of Object.values(item as Record<string, { parameters?: { in: string; name: string }[] }>)) {
        const inPath = (op.parameters ?? []).filter((x) => x.in === "path").map((x) => x.name);
        expect(inPath.sort()).toEqual([...names].sort());
      }
    }
  });

  it("reuses the handlers' own request schemas: a body field's limits come from the domain's zod schema", () => {
    const doc = openApiDocument() as unknown as { paths: Record<string, Record<string, { requestBody?: { content: Record<string, { schema: { properties?: Record<string, { maximum?: number }> } }> } }>> };
    const body = doc.paths["/api/w/{slug}/runs"].post.requestBody?.content["application/json"].schema;
    expect(body?.properties?.permutations?.maximum).toBe(99_999);
  });

  it("says who may call each route: roles from the capability table, session and token schemes", () => {
    const doc = openApiDocument() as unknown as { paths: Record<string, Record<string, { security: unknown; "x-tessera-access": { roles?: string[] } }>>; components: { securitySchemes: Record<string, unknown> } };
    expect(Object.keys(doc.components.securitySchemes).sort()).toEqual(["bearerAuth", "sessionCookie"]);
    expect(doc.components.securitySchemes.bearerAuth).toMatchObject({ type: "http", scheme: "bearer" });
    const invite = doc.paths["/api/w/{slug}/invitations"].post;
    expect(invite["x-tessera-access"].roles).toEqual(["manager"]);
    expect(invite.security).toEqual([{ sessionCookie: [] }, { bearerAuth: [] }]);
    expect(doc.paths["/api/openapi.json"].get.security).toEqual([]);
    expect(doc.paths["/api/account/password"].post.security).toEqual([{ sessionCookie: [] }]);
    expect(rolesFor("runs.manage")).toEqual(expect.arrayContaining(["economist", "steward", "manager"]));
    expect(rolesFor("runs.manage")).not.toContain("subscriber");
  });

  it("makes a session-only workspace route (token management) one entry: no bearer scheme on it", () => {
    const doc = buildOpenApiDocument([
      { area: "account", method: "GET", path: "/api/w/{slug}/tokens", summary: "Your API tokens", access: member("results.view", { sessionOnly: true }), answers: { 200: { description: "Tokens." } } },
    ]) as unknown as { paths: Record<string, Record<string, { security: unknown; parameters: { name: string }[] }>> };
    const op = doc.paths["/api/w/{slug}/tokens"].get;
    expect(op.security).toEqual([{ sessionCookie: [] }]);
    expect(op.parameters.map((p) => p.name)).toEqual(["slug"]);
    expect(operationIdOf({ method: "DELETE", path: "/api/w/{slug}/tokens/{tokenId}" })).toBe("deleteWSlugTokensTokenId");
  });

  it("answers every error with the one error body", () => {
    const doc = openApiDocument() as unknown as { paths: Record<string, Record<string, { responses: Record<string, { content?: Record<string, { schema: { $ref?: string } }> }> }>> };
    const runs = doc.paths["/api/w/{slug}/runs"].post.responses;
    for (const status of ["400", "401", "403", "404", "409", "422", "429", "500", "503"]) {
      expect(runs[status]?.content?.["application/json"]?.schema.$ref).toBe("#/components/schemas/ErrorBody");
    }
  });

  it("documents a refusal that answers another body with that body (a failed upload's 422), not the error body", () => {
    const doc = openApiDocument() as unknown as { paths: Record<string, Record<string, { responses: Record<string, { content?: Record<string, { schema: { $ref?: string } }> }> }>> };
    const complete = doc.paths["/api/w/{slug}/intake/uploads/{uploadId}/complete"].post.responses;
    expect(complete["422"]?.content?.["application/json"]?.schema.$ref).toBe("#/components/schemas/Upload");
    expect(complete["409"]?.content?.["application/json"]?.schema.$ref).toBe("#/components/schemas/ErrorBody");
  });
});

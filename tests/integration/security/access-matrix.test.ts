import { readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { ACCESS_MESSAGES, TOKEN_MESSAGES } from "@/lib/auth/errors";
import { CAPABILITIES, ROLES, can } from "@/lib/auth/roles";
import { authorizeMember } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { createToken } from "@/lib/tokens/service";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { buildWorld, callerToken, CALLERS, MEMBER_ROLES, type Caller, type MemberRole, type World } from "./fixtures-world";
import {
  DOCUMENTED_ROLES,
  METHODS,
  PUBLIC_ROWS,
  SERVER_ACTION_FILES,
  WORKSPACE_ROWS,
  urlOf,
  type PublicRow,
  type WorkspaceRow,
} from "./route-matrix";
import { bodyOf, handlerOf, requestFor, routeModule, send, signedInAs as signSessionAs, signInCaller as signSessionCaller } from "./route-calls";

// Every route handler, called in-process with a real Request as each role,
// as a manager of another workspace and signed out, against the real
// PostgreSQL, S3 and job queue. Only "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(120_000);

const ROOT = process.cwd();
const ROWS: (WorkspaceRow | PublicRow)[] = [...WORKSPACE_ROWS, ...PUBLIC_ROWS];
let world: World;

beforeAll(async () => {
  await requireTestServices();
  world = await buildWorld();
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

function signedInAs(user: { id: number; email: string; name: string } | null): void {
  signSessionAs(sessionMock, user);
}

function signInCaller(caller: Caller): void {
  signSessionCaller(sessionMock, world, caller);
}

/** Files under `dir` (relative to the project root) whose names match `pattern`. */
function filesUnder(dir: string, pattern: RegExp): string[] {
  const absolute = path.join(ROOT, dir);
  return (readdirSync(absolute, { recursive: true, withFileTypes: true }) as import("node:fs").Dirent[])
    .filter((entry) => entry.isFile() && pattern.test(entry.name))
    .map((entry) => path.relative(ROOT, path.join(entry.parentPath, entry.name)).split(path.sep).join("/"))
    .sort();
}

function expectedStatus(row: WorkspaceRow, caller: Caller): number {
  if (caller === "signed-out") return 401;
  if (caller === "outsider") return 404;
  return DOCUMENTED_ROLES[row.capability].includes(caller) ? row.ok : (row.refused ?? 403);
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
/** A well-formed id of no row (API tokens have UUID ids). */
const MISSING_UUID = "0d6a3f8e-1b2c-4d5e-8f90-a1b2c3d4e5f6";

const CALLER_LABELS: Record<Caller, string> = {
  manager: "manager",
  steward: "steward",
  economist: "economist",
  subscriber: "subscriber",
  outsider: "manager of another workspace",
  "signed-out": "signed-out visitor",
};

describe("the matrix lists every route handler and server action", () => {
  it("has a row for every (route file, exported method) pair and none for a pair that is gone", async () => {
    const discovered: string[] = [];
    for (const file of filesUnder("app", /^route\.(ts|tsx|js)$/)) {
      const mod = await routeModule(file);
      for (const method of METHODS) if (typeof mod[method] === "function") discovered.push(`${method} ${file}`);
    }
    const listed = new Set(ROWS.map((r) => `${r.method} ${r.route}`));
    const missing = discovered.filter((pair) => !listed.has(pair));
    const stale = [...listed].filter((pair) => !discovered.includes(pair));
    expect(discovered.length).toBeGreaterThan(30);
    if (missing.length) {
      throw new Error(
        `The access matrix has no row for:\n  ${missing.join("\n  ")}\nAdd a row for each to tests/integration/security/route-matrix.ts (workspace routes) or route-matrix-public.ts (routes outside workspaces): the capability it needs, how to build its params for a fresh fixture, and a valid body.`,
      );
    }
    if (stale.length) throw new Error(`The access matrix has rows for routes that no longer exist:\n  ${stale.join("\n  ")}\nRemove them from tests/integration/security/route-matrix*.ts.`);
  });

  it("lists every file with a \"use server\" directive (server actions), and no file that lost it", () => {
    const directive = /^\s*(["'])use server\1\s*;?\s*$/m;
    const found = ["app", "lib", "components"]
      .flatMap((dir) => filesUnder(dir, /\.(ts|tsx|js|jsx|mjs)$/))
      .filter((file) => directive.test(readFileSync(path.join(ROOT, file), "utf8")));
    const listed = SERVER_ACTION_FILES.map((s) => s.file);
    const unlisted = found.filter((f) => !listed.includes(f));
    if (unlisted.length) {
      throw new Error(`Server actions not in the access matrix:\n  ${unlisted.join("\n  ")}\nList each in SERVER_ACTION_FILES in tests/integration/security/route-matrix.ts and add rows that call its actions as every role.`);
    }
    expect(listed.filter((f) => !found.includes(f))).toEqual([]);
  });

  it("authorises every workspace route through memberRoute with the capability its row names", () => {
    const wrong: string[] = [];
    for (const row of WORKSPACE_ROWS.filter((r) => !r.variant)) {
      const source = readFileSync(path.join(ROOT, row.route), "utf8");
      const match = new RegExp(`export const ${row.method} = memberRoute\\(\\s*\\{([^}]*)\\}`).exec(source);
      const capability = match ? /capability:\s*"([^"]+)"/.exec(match[1])?.[1] : undefined;
      if (capability !== row.capability) wrong.push(`${row.method} ${row.route}: code says ${capability ?? "(no memberRoute)"}, the matrix ${row.capability}`);
      const sessionOnly = match ? /\bsessionOnly:\s*true\b/.test(match[1]) : false;
      if (sessionOnly !== Boolean(row.sessionOnly)) wrong.push(`${row.method} ${row.route}: code says sessionOnly ${sessionOnly}, the matrix ${Boolean(row.sessionOnly)}`);
      const hasBodySchema = match ? /\bbody:/.test(match[1]) : false;
      if (hasBodySchema !== Boolean(row.invalidBody)) wrong.push(`${row.method} ${row.route}: ${hasBodySchema ? "has a body schema but its row no invalidBody case" : "its row has an invalidBody case but memberRoute has no body schema"}`);
    }
    expect(wrong).toEqual([]);
  });

  it("lets no route handler read the request body itself, unless its row says why and tests a schema-invalid body", () => {
    const reads = /\b(request|req)\s*\.\s*(json|text|formData|arrayBuffer|blob|body)\b/;
    const offenders: string[] = [];
    for (const file of filesUnder("app", /^route\.(ts|tsx|js)$/)) {
      if (!reads.test(readFileSync(path.join(ROOT, file), "utf8"))) continue;
      const rows = PUBLIC_ROWS.filter((r) => r.route === file);
      const documented = rows.some((r) => r.readsBodyItself && r.cases.some((c) => c.invalidBody));
      if (!documented) offenders.push(file);
    }
    // next-auth reads its body inside the library; its row documents that too.
    for (const row of PUBLIC_ROWS.filter((r) => r.readsBodyItself)) {
      expect(row.cases.some((c) => c.invalidBody)).toBe(true);
    }
    if (offenders.length) {
      throw new Error(`These route handlers read the request body themselves instead of through memberRoute's \`body\` schema:\n  ${offenders.join("\n  ")}\nUse memberRoute({ capability, body: schema }), or document why in the row (readsBodyItself) and add a schema-invalid body case.`);
    }
  });

  it("has a bad-query-string case for every workspace route that reads search parameters", () => {
    const unchecked = WORKSPACE_ROWS.filter((row) => !row.variant && /searchParams|parseSearch\(/.test(readFileSync(path.join(ROOT, row.route), "utf8")) && !row.invalidQuery);
    expect(unchecked.map((row) => `${row.method} ${row.route}`)).toEqual([]);
  });

  it("has lib/auth/roles.ts grant exactly the capabilities of the roles table in docs/guarantees.md", () => {
    for (const capability of CAPABILITIES) {
      expect(ROLES.filter((role) => can(role, capability))).toEqual(DOCUMENTED_ROLES[capability]);
    }
  });
});

for (const row of WORKSPACE_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}${row.variant ? ` for ${row.variant}` : ""}`;
  describe(`${where} needs ${row.capability}: ${row.does}`, () => {
    for (const caller of CALLERS) {
      const expected = expectedStatus(row, caller);
      it(`${CALLER_LABELS[caller]} gets ${expected} from ${where}`, async () => {
        const call = await row.prepare(world, caller);
        const before = expected >= 400 && row.effect ? await row.effect(world, call) : undefined;
        signInCaller(caller);
        const response = await send(row, call);
        const body = await bodyOf(response);
        if (response.status !== expected) throw new Error(`${CALLER_LABELS[caller]} got ${response.status} from ${where}, expected ${expected}: ${JSON.stringify(body)}`);
        if (expected === 401 || expected === 403) expect(body).toEqual({ error: ACCESS_MESSAGES[expected] });
        if (expected === 404) {
          // Indistinguishable from a workspace (for a stranger) or a row (for a member) that does not exist.
          const missingParams =
            caller === "outsider"
              ? { ...call.params, slug: `no-such-workspace-${Date.now().toString(36)}` }
              : Object.fromEntries(Object.entries(call.params).map(([k, v]) => [k, k.endsWith("Id") ? (UUID.test(v) ? MISSING_UUID : "2000000000") : v]));
          const missing = await send(row, { ...call, params: missingParams });
          expect(missing.status).toBe(404);
          expect(body).toEqual(await bodyOf(missing));
        }
        if (before !== undefined) expect(await row.effect?.(world, call)).toEqual(before);
      });
    }

    const invalidBody = row.invalidBody;
    if (invalidBody) {
      const allowed = DOCUMENTED_ROLES[row.capability][0] as Caller;
      it(`${allowed} gets 400 for malformed JSON sent to ${where}`, async () => {
        const call = await row.prepare(world, allowed);
        signInCaller(allowed);
        const response = await send(row, call, '{"not json"');
        expect(response.status).toBe(400);
        expect(await response.json()).toEqual({ error: "The request body is not valid JSON.", field: null });
      });
      it(`${allowed} gets 400 naming "${invalidBody.field}" for a schema-invalid body sent to ${where}`, async () => {
        const call = await row.prepare(world, allowed);
        const before = row.effect ? await row.effect(world, call) : undefined;
        signInCaller(allowed);
        const response = await send(row, { ...call, body: invalidBody.body });
        const body = (await response.json()) as { field: string; error: string };
        expect(response.status).toBe(400);
        expect(body.field).toBe(invalidBody.field);
        expect(body.error.startsWith(`${invalidBody.field}: `)).toBe(true);
        if (row.effect) expect(await row.effect(world, call)).toEqual(before);
      });
    }

    const invalidQuery = row.invalidQuery;
    if (invalidQuery) {
      const allowed = DOCUMENTED_ROLES[row.capability].at(-1) as Caller;
      it(`${allowed} gets 400 naming "${invalidQuery.field}" for a bad query string on ${where}`, async () => {
        const call = await row.prepare(world, allowed);
        signInCaller(allowed);
        const response = await send(row, { ...call, search: invalidQuery.search(world) });
        const body = (await response.json()) as { field: string; error: string };
        expect(response.status).toBe(400);
        expect(body.field).toBe(invalidQuery.field);
        expect(body.error).toContain(invalidQuery.field);
      });
    }
  });
}

// The same matrix with a personal API token (Authorization: Bearer) instead of the session: each member's
// own token of their own role gets exactly what their session gets; the token of a manager of another
// workspace gets exactly the answer for a workspace that does not exist; the token-management routes
// refuse every token alike. Nobody is signed in for these calls.
type TokenCaller = MemberRole | "outsider";
const TOKEN_CALLERS: readonly TokenCaller[] = [...MEMBER_ROLES, "outsider"];
let outsiderToken: Promise<string> | null = null;

async function tokenFor(caller: TokenCaller): Promise<string> {
  if (caller !== "outsider") return callerToken(world, caller);
  outsiderToken ??= (async () => {
    const member = await authorizeMember(world.outsider.id, world.outsiderSlug, "results.view");
    return (await createToken(member, { name: "outsider script", role: "manager", expiresInDays: 7 })).token;
  })();
  return outsiderToken;
}

async function sendWithToken(row: WorkspaceRow, call: Parameters<typeof send>[1], token: string): Promise<Response> {
  const request = requestFor(row, call);
  request.headers.set("authorization", `Bearer ${token}`);
  return (await handlerOf(row.route, row.method))(request, { params: Promise.resolve(call.params) });
}

for (const row of WORKSPACE_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}${row.variant ? ` for ${row.variant}` : ""}`;
  describe(`${where} with an API token instead of the session`, () => {
    for (const caller of TOKEN_CALLERS) {
      const expected = row.sessionOnly ? 403 : expectedStatus(row, caller);
      const who = caller === "outsider" ? "a token of a manager of another workspace" : `the ${caller}'s own ${caller} token`;
      it(`${who} gets ${expected} from ${where}`, async () => {
        const call = await row.prepare(world, caller === "outsider" ? "outsider" : caller);
        const before = expected >= 400 && row.effect ? await row.effect(world, call) : undefined;
        const token = await tokenFor(caller);
        signedInAs(null);
        const response = await sendWithToken(row, call, token);
        const body = await bodyOf(response);
        if (response.status !== expected) throw new Error(`${who} got ${response.status} from ${where}, expected ${expected}: ${JSON.stringify(body)}`);
        if (row.sessionOnly) expect(body).toEqual({ error: TOKEN_MESSAGES.sessionOnly });
        else if (expected === 403) expect(body).toEqual({ error: ACCESS_MESSAGES[403] });
        if (expected === 404 && caller === "outsider") {
          // Exactly what the same token gets for a workspace that does not exist: no hint that this one does.
          const missing = await sendWithToken(row, { ...call, params: { ...call.params, slug: `no-such-workspace-${Date.now().toString(36)}` } }, token);
          expect(missing.status).toBe(404);
          expect(body).toEqual(await bodyOf(missing));
          expect(body).toEqual({ error: ACCESS_MESSAGES[404] });
        }
        if (before !== undefined) expect(await row.effect?.(world, call)).toEqual(before);
      });
    }
  });
}

for (const row of PUBLIC_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}`;
  describe(`${where} (outside workspaces): ${row.rule}`, () => {
    for (const c of row.cases) {
      it(`${where}: ${c.name}`, async () => {
        signedInAs(null);
        const handler = await handlerOf(row.route, row.method);
        const response = await c.run({ handler, world, signInAs: signedInAs });
        if (response.status !== c.status) throw new Error(`${where} answered ${response.status}, expected ${c.status}: ${JSON.stringify(await bodyOf(response.clone()))}`);
        expect(response.status).toBeLessThan(500);
        await c.check?.(response, world);
      });
    }
  });
}

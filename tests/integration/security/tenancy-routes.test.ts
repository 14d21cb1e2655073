import path from "node:path";
import { QueryTypes } from "sequelize";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { deliverDigest } from "@/lib/digests/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { getCapturedMail, listCapturedMail } from "@/lib/mail/outbox";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { buildTenancyWorld, leaksOf, type TenancyWorld } from "./fixtures-tenancy";
import { callerToken, MEMBER_ROLES, subscriptionFor, type MemberRole } from "./fixtures-world";
import { DOCUMENTED_ROLES, PUBLIC_ROWS, WORKSPACE_ROWS, urlOf, type Call, type WorkspaceRow } from "./route-matrix";
import type { Handler } from "./route-matrix-public";

// Tenancy proven on content (docs/guarantees.md, "No one reads another team's data"): with a second workspace B full
// of distinctive data (fixtures-tenancy.ts), every route handler the access
// matrix lists is called as each role of workspace A — with A's own
// parameters, with B's slug, and with B's row ids in A's URLs — and no answer
// body (JSON, CSV export, text) may contain any of B's strings or, under an
// id-like key, any of B's row ids. Captured mail of A's members and A's
// Outbox reads are checked the same way. Only "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(300_000);

const ROOT = process.cwd();
let world: TenancyWorld;

function signInAs(user: { id: number; email: string; name: string } | null): void {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}

beforeAll(async () => {
  await requireTestServices();
  world = await buildTenancyWorld(signInAs);
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

async function handlerOf(route: string, method: string): Promise<Handler> {
  const mod = (await import(path.join(ROOT, route))) as Record<string, unknown>;
  const handler = mod[method];
  if (typeof handler !== "function") throw new Error(`${route} exports no ${method} handler`);
  return handler as Handler;
}

async function send(row: WorkspaceRow, call: Call): Promise<{ status: number; body: string }> {
  const url = `http://tessera.test${urlOf(row.route).replace(/\[(\w+)\]/g, (_, name: string) => call.params[name] ?? name)}${call.search !== undefined ? `?${call.search}` : ""}`;
  const body = call.body === undefined ? undefined : JSON.stringify(call.body);
  const request = new Request(url, { method: row.method, headers: body === undefined ? {} : { "content-type": "application/json" }, body });
  const response = await (await handlerOf(row.route, row.method))(request, { params: Promise.resolve(call.params) });
  return { status: response.status, body: await response.text() };
}

function expectNoLeak(where: string, body: string): void {
  const leaks = leaksOf(body, world.b);
  if (leaks.length) throw new Error(`${where} showed workspace B's data: ${leaks.join("; ")}\n${body.slice(0, 600)}`);
}

type Substitutes = { tokenId: string; runId: number; uploadId: string; invitationId: number; userId: number; panelVersionId: number; boundaryVersionId: number; boundarySetId: number };

const idsOfB = (): Substitutes => ({
  tokenId: world.b.tokenId,
  runId: world.b.runId,
  uploadId: world.b.uploadIds[0],
  invitationId: world.b.invitationId,
  userId: world.b.manager.id,
  panelVersionId: world.b.panelVersionId,
  boundaryVersionId: world.b.boundaryVersionId,
  boundarySetId: world.b.boundarySetId,
});
const MISSING = 2_000_000_000;
const missingIds = (): Substitutes => ({
  tokenId: "0d6a3f8e-1b2c-4d5e-8f90-a1b2c3d4e5f6",
  runId: MISSING,
  uploadId: "3f1c2b4e-9a8d-4c7b-8e6f-5a4b3c2d1e0f",
  invitationId: MISSING,
  userId: MISSING,
  panelVersionId: MISSING,
  boundaryVersionId: MISSING,
  boundarySetId: MISSING,
});

/** The call with each of A's row ids (path, query and body) replaced by `ids`; null when the row names no such id. */
function withIds(row: WorkspaceRow, call: Call, ids: Substitutes): Call | null {
  const params = { ...call.params };
  let changed = false;
  const swap = (name: string, value: string) => {
    if (params[name] !== undefined) {
      params[name] = value;
      changed = true;
    }
  };
  swap("runId", String(ids.runId));
  swap("uploadId", ids.uploadId);
  swap("tokenId", ids.tokenId);
  swap("invitationId", String(ids.invitationId));
  swap("userId", String(ids.userId));
  if (params.versionId !== undefined) {
    const boundaries = row.route.includes("/boundaries/") || params.kind === "boundaries";
    swap("versionId", String(boundaries ? ids.boundaryVersionId : ids.panelVersionId));
  }
  let search = call.search;
  if (search?.includes(`run=${world.a.runId}`)) {
    search = search.replace(`run=${world.a.runId}`, `run=${ids.runId}`);
    changed = true;
  }
  let body = call.body;
  if (body && typeof body === "object") {
    const record = { ...(body as Record<string, unknown>) };
    if ("panelVersionId" in record) record.panelVersionId = ids.panelVersionId;
    if ("boundarySetId" in record) record.boundarySetId = ids.boundarySetId;
    if (JSON.stringify(record) !== JSON.stringify(body)) {
      body = record;
      changed = true;
    }
  }
  return changed ? { params, search, body } : null;
}

const allowed = (row: WorkspaceRow, role: MemberRole) => DOCUMENTED_ROLES[row.capability].includes(role);

describe("workspace B exists and is distinctive", () => {
  it("was created through POST /api/workspaces with B's manager as its only member, a manager", async () => {
    const rows = await db().query<{ user_id: number; role: string }>("SELECT user_id, role FROM memberships WHERE workspace_id = $1", {
      bind: [world.b.workspace.id],
      type: QueryTypes.SELECT,
    });
    expect(rows).toEqual([{ user_id: world.b.manager.id, role: "manager" }]);
  });

  it("holds rows of every kind the suite looks for, and every one has an id of its own range", () => {
    for (const table of ["workspaces", "users", "memberships", "invitations", "audit_events", "uploads", "boundary_sets", "boundary_versions", "regions", "panels", "panel_versions", "indicators", "runs", "run_results", "digest_subscriptions", "outbox_messages", "api_tokens"]) {
      expect([table, world.b.ids[table]?.size ?? 0]).not.toEqual([table, 0]);
    }
    const numericIds = Object.entries(world.b.ids).filter(([table]) => table !== "uploads" && table !== "api_tokens" && table !== "workspaces" && table !== "users");
    for (const [table, ids] of numericIds) for (const id of ids) expect([table, Number(id) >= 1_000_000_000]).toEqual([table, true]);
  });

  it("is visible to its own manager (so the leak check below can see B's data when it is there)", async () => {
    const row = WORKSPACE_ROWS.find((r) => r.route.endsWith("/intake/indicators/route.ts") && r.method === "GET");
    if (!row) throw new Error("no GET indicators row");
    signInAs(world.b.manager);
    const answer = await send(row, { params: { slug: world.b.workspace.slug } });
    expect(answer.status).toBe(200);
    expect(leaksOf(answer.body, world.b).length).toBeGreaterThan(0);
  });
});

for (const row of WORKSPACE_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}${row.variant ? ` (${row.variant})` : ""}`;
  describe(`${where} shows A's members nothing of B`, () => {
    for (const role of MEMBER_ROLES) {
      it(`as A's ${role}: A's own call, B's slug and B's ids leak nothing`, async () => {
        const a = world.a;
        const call = await row.prepare(a, role);
        signInAs(a.users[role]);

        const own = await send(row, call);
        const expected = allowed(row, role) ? row.ok : (row.refused ?? 403);
        if (own.status !== expected) throw new Error(`${where} as A's ${role} answered ${own.status}, expected ${expected}: ${own.body.slice(0, 300)}`);
        expectNoLeak(`${where} as A's ${role}`, own.body);

        const inB = await send(row, { ...call, params: { ...call.params, slug: world.b.workspace.slug } });
        expect([where, inB.status]).toEqual([where, 404]);
        expectNoLeak(`${where} on B's slug as A's ${role}`, inB.body);

        const withB = allowed(row, role) ? withIds(row, call, idsOfB()) : null;
        if (withB) {
          const answer = await send(row, withB);
          expectNoLeak(`${where} with B's ids as A's ${role}`, answer.body);
          // A row of B named in A's URL, query or body does not exist for A: a refusal, or
          // (for a filter such as ?run=) exactly the answer for an id that exists nowhere.
          if (answer.status < 400) {
            const missing = withIds(row, call, missingIds());
            const nowhere = missing ? await send(row, missing) : null;
            if (!nowhere || nowhere.status !== answer.status || nowhere.body !== answer.body) {
              throw new Error(`${where} with B's ids as A's ${role} answered ${answer.status}, unlike for ids that exist nowhere (${nowhere?.status}): ${answer.body.slice(0, 300)}`);
            }
          }
        }
      });
    }
  });
}

// The same with personal API tokens (Authorization: Bearer, nobody signed in): a token of A's member shows
// nothing of B on A's routes and gets 404 on B's slug (403 on the session-only token routes, whatever the
// slug); B's manager's token gets on A's slug exactly the answer for a workspace that does not exist.
async function sendWithToken(row: WorkspaceRow, call: Call, token: string): Promise<{ status: number; body: string }> {
  const url = `http://tessera.test${urlOf(row.route).replace(/\[(\w+)\]/g, (_, name: string) => call.params[name] ?? name)}${call.search !== undefined ? `?${call.search}` : ""}`;
  const body = call.body === undefined ? undefined : JSON.stringify(call.body);
  const headers: Record<string, string> = { authorization: `Bearer ${token}` };
  if (body !== undefined) headers["content-type"] = "application/json";
  const response = await (await handlerOf(row.route, row.method))(new Request(url, { method: row.method, headers, body }), { params: Promise.resolve(call.params) });
  return { status: response.status, body: await response.text() };
}

for (const row of WORKSPACE_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}${row.variant ? ` (${row.variant})` : ""}`;
  describe(`${where} with API tokens shows nothing across workspaces`, () => {
    for (const role of MEMBER_ROLES) {
      it(`A's ${role}'s token: A's own call leaks nothing of B, B's slug is 404`, async () => {
        const a = world.a;
        const call = await row.prepare(a, role);
        const token = await callerToken(a, role);
        signInAs(null);
        const own = await sendWithToken(row, call, token);
        const expected = row.sessionOnly ? 403 : allowed(row, role) ? row.ok : (row.refused ?? 403);
        if (own.status !== expected) throw new Error(`${where} with A's ${role}'s token answered ${own.status}, expected ${expected}: ${own.body.slice(0, 300)}`);
        expectNoLeak(`${where} with A's ${role}'s token`, own.body);
        const inB = await sendWithToken(row, { ...call, params: { ...call.params, slug: world.b.workspace.slug } }, token);
        expect([where, inB.status]).toEqual([where, row.sessionOnly ? 403 : 404]);
        expectNoLeak(`${where} on B's slug with A's ${role}'s token`, inB.body);
      });
    }
    it("B's manager's token on A's slug gets the answer for a workspace that does not exist", async () => {
      const call = await row.prepare(world.a, "manager");
      signInAs(null);
      const onA = await sendWithToken(row, call, world.b.token);
      const nowhere = await sendWithToken(row, { ...call, params: { ...call.params, slug: `no-such-workspace-${Date.now().toString(36)}` } }, world.b.token);
      expect([where, onA.status]).toEqual([where, row.sessionOnly ? 403 : 404]);
      expect(onA.body).toBe(nowhere.body);
    });
  });
}

describe("routes outside workspaces show A's members nothing of B", () => {
  for (const row of PUBLIC_ROWS) {
    for (const c of row.cases) {
      it(`${row.method} ${urlOf(row.route)}: ${c.name}`, async () => {
        signInAs(null);
        const response = await c.run({ handler: await handlerOf(row.route, row.method), world: world.a, signInAs });
        expect(response.status).toBeLessThan(500);
        expectNoLeak(`${row.method} ${urlOf(row.route)} (${c.name})`, await response.text());
      });
    }
  }
});

describe("mail and the Outbox of A show nothing of B", () => {
  it("a digest to each of A's members contains nothing of B", async () => {
    for (const role of MEMBER_ROLES) {
      const user = world.a.users[role];
      const subscriptionId = await subscriptionFor(world.a, user.id);
      const outcome = await deliverDigest({ subscriptionId, idempotencyKey: `sub-${subscriptionId}:tenancy-${Date.now()}`, runId: null, coverage: "tenancy check" });
      expect([role, outcome]).toEqual([role, "sent"]);
    }
    const emails = MEMBER_ROLES.map((role) => world.a.users[role].email);
    // Decoded parts as well as the raw source: a quoted-printable or base64 body would hide a string from the raw text.
    const mails = await db().query<{ id: number; raw: string; to: string[] }>(
      `SELECT id, concat_ws(E'\n', subject, text, html, raw) AS raw, "to" FROM outbox_messages WHERE "to" && $1::text[]`,
      {
        bind: [emails],
        type: QueryTypes.SELECT,
      },
    );
    const reached = new Set(mails.flatMap((m) => m.to));
    for (const email of emails) expect([email, reached.has(email)]).toEqual([email, true]);
    for (const mail of mails) expectNoLeak(`mail #${mail.id} to ${mail.to.join(", ")}`, mail.raw);
  });

  it("every mail filed under A contains nothing of B, and A's Outbox reads never return B's mail", async () => {
    const mails = await db().query<{ id: number; raw: string }>("SELECT id, concat_ws(E'\\n', subject, text, html, raw) AS raw FROM outbox_messages WHERE workspace_id = $1", { bind: [world.a.workspace.id], type: QueryTypes.SELECT });
    expect(mails.length).toBeGreaterThan(0);
    for (const mail of mails) expectNoLeak(`mail #${mail.id} filed under A`, mail.raw);
    const listed = await listCapturedMail(world.a.workspace.id, { limit: 500 });
    expectNoLeak("A's Outbox list", JSON.stringify(listed));
    for (const id of world.b.mailIds) {
      expect(listed.map((m) => m.id)).not.toContain(id);
      expect(await getCapturedMail(world.a.workspace.id, id)).toBeNull();
    }
  });
});

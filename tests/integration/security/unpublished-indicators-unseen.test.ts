import { QueryTypes } from "sequelize";
import { GET as getCatalogue } from "@/app/api/w/[slug]/catalogue/route";
import { GET as getExport } from "@/app/api/w/[slug]/catalogue/export/route";
import { GET as getCompare } from "@/app/api/w/[slug]/compare/route";
import { GET as getDesk } from "@/app/api/w/[slug]/desk/route";
import { GET as getDigests } from "@/app/api/w/[slug]/digests/route";
import { GET as getDigestPreview } from "@/app/api/w/[slug]/digests/preview/route";
import { GET as getMap } from "@/app/api/w/[slug]/map/route";
import { GET as getRun } from "@/app/api/w/[slug]/runs/[runId]/route";
import { GET as getRunOptions } from "@/app/api/w/[slug]/runs/options/route";
import { GET as getRuns } from "@/app/api/w/[slug]/runs/route";
import { GET as getRobustness } from "@/app/api/w/[slug]/timeline/robustness/route";
import { GET as getTimeline } from "@/app/api/w/[slug]/timeline/route";
import { GET as getIntake } from "@/app/api/w/[slug]/intake/route";
import { GET as getIndicators } from "@/app/api/w/[slug]/intake/indicators/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import type { Role } from "@/lib/auth/roles";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { analysedIndicators } from "@/lib/runs/queries";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { insertRun } from "@/lib/runs/store";
import { runPiece } from "@/lib/runs/worker";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace, unique } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";

// the roles table in docs/guarantees.md: only stewards and managers see unpublished data. An indicator
// record is written when a panel is ingested, so a panel still under embargo
// names its indicators (code, label, description) before it is published.
// One published panel (indicator P, analysed by a completed run) and one
// validated but unpublished panel whose only indicator U has distinctive
// texts; every route that lists or describes indicators is called as each role.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(120_000);

const P = "unemployment_rate";
const PERIODS = ["2011", "2012"];
const tag = unique("u").replace(/[^a-z0-9]/gi, "").toLowerCase();
const U = { code: `embargoed_${tag}`, label: `Quokka harbour index ${tag}`, description: `Zephyr release notes ${tag}` };

let slug: string;
let workspaceId: number;
let runId: number;
let pLabel: string;
let users: Record<string, { id: number; email: string; name: string }>;

const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const get = (query = "") => new Request(`http://tessera.test/api?${query}`);

function signedInAs(user: { id: number; email: string; name: string }) {
  sessionMock.mockResolvedValue({ id: user.id, email: user.email, name: user.name } satisfies SessionUser);
}

type Call = { name: string; call: () => Promise<Response> };

/** Routes that list or describe indicators without being told U's code. */
function listingCalls(): Call[] {
  const s = { slug };
  return [
    { name: "intake indicators", call: () => getIndicators(get(), ctx(s)) },
    { name: "intake overview", call: () => getIntake(get(), ctx(s)) },
    { name: "run options", call: () => getRunOptions(get(), ctx(s)) },
    { name: "runs", call: () => getRuns(get(), ctx(s)) },
    { name: "run", call: () => getRun(get(), ctx({ slug, runId: String(runId) })) },
    { name: "catalogue", call: () => getCatalogue(get(), ctx(s)) },
    { name: "catalogue by U's label", call: () => getCatalogue(get(`q=${encodeURIComponent("Quokka")}`), ctx(s)) },
    { name: "catalogue export", call: () => getExport(get(`run=${runId}`), ctx(s)) },
    { name: "desk", call: () => getDesk(get(), ctx(s)) },
    { name: "digests form", call: () => getDigests(get(), ctx(s)) },
    { name: "digest preview", call: () => getDigestPreview(get(), ctx(s)) },
    { name: "timeline of P", call: () => getTimeline(get(`indicator=${P}&run=${runId}`), ctx(s)) },
    { name: "map of P", call: () => getMap(get(`indicator=${P}&run=${runId}&period=2011`), ctx(s)) },
  ];
}

/** Routes asked about U's code directly (with and without a run): the code is the caller's own input, its texts must not come back. */
function probingCalls(): Call[] {
  const s = { slug };
  const u = encodeURIComponent(U.code);
  return [
    { name: "timeline of U", call: () => getTimeline(get(`indicator=${u}`), ctx(s)) },
    { name: "timeline of U in P's run", call: () => getTimeline(get(`indicator=${u}&run=${runId}`), ctx(s)) },
    { name: "map of U in P's run", call: () => getMap(get(`indicator=${u}&run=${runId}&period=2011`), ctx(s)) },
    { name: "compare U in P's run", call: () => getCompare(get(`indicator=${u}&run=${runId}&a=2011&b=2012`), ctx(s)) },
    { name: "robustness of U in P's run", call: () => getRobustness(get(`indicator=${u}&run=${runId}&period=2011`), ctx(s)) },
  ];
}

async function bodies(calls: Call[]): Promise<Map<string, { status: number; text: string }>> {
  const out = new Map<string, { status: number; text: string }>();
  for (const c of calls) {
    const response = await c.call();
    out.set(c.name, { status: response.status, text: await response.text() });
  }
  return out;
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ manager: "manager", steward: "steward", economist: "economist", subscriber: "subscriber" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  const published = await loadVeldmarkPanel(workspaceId, { indicators: [P], periods: PERIODS });
  const hidden = await loadVeldmarkPanel(workspaceId, { state: "validated", indicators: ["broadband_coverage"], periods: PERIODS });
  await db().query(
    `INSERT INTO indicators (workspace_id, code, label, unit, description, source, higher_is_better, created_at, updated_at)
     VALUES ($1, $2, $3, 'index', $4, 'Embargoed source', true, now(), now())`,
    { bind: [workspaceId, U.code, U.label, U.description] },
  );
  await db().query("UPDATE observations SET indicator_code = $2 WHERE panel_version_id = $1", { bind: [hidden.panelVersionId, U.code] });
  // A completed run on the published panel, computed in this process.
  const params = await resolveRunParams(workspaceId, published.panelVersionId, runParamsInputSchema.parse({ seed: 3, permutations: 99, local: false }));
  runId = await insertRun({ workspaceId, params, createdBy: users.economist.id, origin: "user" });
  expect(await runPiece(runId, P)).toBe("completed-run");
  const [row] = await db().query<{ label: string }>("SELECT label FROM indicators WHERE workspace_id = $1 AND code = $2", {
    bind: [workspaceId, P],
    type: QueryTypes.SELECT,
  });
  pLabel = row.label;
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

const U_TEXTS = () => [U.code, U.label, U.description, tag];

describe.each<[string, Role]>([
  ["economist", "economist"],
  ["subscriber", "subscriber"],
])("as %s, an indicator only in an unpublished panel is listed nowhere", (label) => {
  it("no answer that lists or describes indicators names U; P is listed", async () => {
    signedInAs(users[label]);
    const answers = await bodies(listingCalls());
    for (const [name, { status, text }] of answers) {
      expect([name, status < 500]).toEqual([name, true]);
      for (const secret of U_TEXTS()) expect([name, text.includes(secret)]).toEqual([name, false]);
    }
    // P is there wherever this role is allowed to look (403s aside).
    for (const name of ["intake indicators", "intake overview", "digests form", "catalogue", "desk", "timeline of P"]) {
      const answer = answers.get(name);
      expect([name, answer?.status]).toEqual([name, 200]);
      expect([name, answer?.text.includes(P)]).toEqual([name, true]);
    }
    for (const name of ["intake indicators", "digests form"]) expect([name, answers.get(name)?.text.includes(pLabel)]).toEqual([name, true]);
    if (label === "economist") {
      expect(answers.get("run options")?.status).toBe(200);
      expect(answers.get("run options")?.text).toContain(P);
      expect(answers.get("catalogue export")?.text).toContain(pLabel);
    }
  });

  it("asking for U's code directly returns none of its texts", async () => {
    signedInAs(users[label]);
    for (const [name, { status, text }] of await bodies(probingCalls())) {
      expect([name, status < 500]).toEqual([name, true]);
      for (const secret of [U.label, U.description]) expect([name, text.includes(secret)]).toEqual([name, false]);
    }
  });

});

it("the selectors of the timeline, map and comparison pages (server components, every role) offer P only", async () => {
  expect((await analysedIndicators(workspaceId)).map((i) => i.code)).toEqual([P]);
});

describe("stewards and managers see unpublished indicators where they see unpublished data", () => {
  it.each(["steward", "manager"])("as %s, the intake lists and the digests form name U with its label and description", async (label) => {
    signedInAs(users[label]);
    const answers = await bodies(listingCalls().filter((c) => ["intake indicators", "intake overview", "digests form"].includes(c.name)));
    for (const [name, { status, text }] of answers) {
      expect([name, status]).toEqual([name, 200]);
      expect([name, text.includes(U.code), text.includes(U.label)]).toEqual([name, true, true]);
      expect([name, text.includes(P)]).toEqual([name, true]);
    }
    expect(answers.get("intake indicators")?.text).toContain(U.description);
  });
});

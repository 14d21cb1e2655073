import { GET as getTransitions } from "@/app/api/w/[slug]/map/transitions/route";
import { getSessionUser } from "@/lib/auth/session";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { PanelTransitions } from "@/lib/runs/panel-transitions";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { completeRunInProcess, queuedRun } from "@/tests/integration/security/fixtures-world";
import { loadVeldmarkPanel } from "./fixtures";
import { asSession, ctx, getRequest } from "@/tests/integration/intake/fixtures";

// GET /api/w/[slug]/map/transitions against the real services: a Veldmark run over
// four periods with one region's value removed in 2012, computed in this process.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

const PERIODS = ["2011", "2012", "2013", "2014"];
const INDICATOR = "unemployment_rate";
const GAP = "VM-010";

type UserRow = { id: number; email: string; name: string };
const signedInAs = (user: UserRow) => sessionMock.mockResolvedValue(asSession(user));

let slug: string;
let reader: UserRow;
let outsider: UserRow;
let otherSlug: string;
let runId: number;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber" });
  slug = made.workspace.slug;
  reader = made.users.reader;
  const other = await makeWorkspace({ outsider: "manager" });
  otherSlug = other.workspace.slug;
  outsider = other.users.outsider;
  const panel = await loadVeldmarkPanel(made.workspace.id, {
    indicators: [INDICATOR],
    periods: PERIODS,
    mutate: (_indicator, period, region, value) => (period === "2012" && region === GAP ? null : value),
  });
  runId = await queuedRun(made.workspace.id, made.users.analyst.id, panel.panelVersionId, [INDICATOR], PERIODS);
  await completeRunInProcess(runId, [INDICATOR]);
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

const sum = (rows: number[][]) => rows.flat().reduce((s, v) => s + v, 0);

describe("GET map/transitions", () => {
  it("answers the spatial Markov tables over every pair of the run's periods, with the missing region dropped from two pairs", async () => {
    signedInAs(reader);
    const response = await getTransitions(getRequest(`indicator=${INDICATOR}&run=${runId}`), ctx({ slug }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { runId: number; transitions: PanelTransitions };
    expect(body.runId).toBe(runId);
    const t = body.transitions;
    expect(t.indicator).toBe(INDICATOR);
    expect(t.classes).toBe(5);
    expect(t.periods).toEqual(PERIODS);
    expect(t.pairs.map((p) => [p.earlier, p.later])).toEqual([
      ["2011", "2012"],
      ["2012", "2013"],
      ["2013", "2014"],
    ]);
    expect(t.pairs.map((p) => p.missing)).toEqual([1, 1, 0]);
    expect(t.droppedMissing).toBe(2);
    // The two one-district islets have no neighbours under the run's queen weights (seeders/data/veldmark/README.md).
    expect(t.pairs.map((p) => p.noNeighbours)).toEqual([2, 2, 2]);
    expect(t.pairs.map((p) => p.regions)).toEqual([235, 235, 236]);
    expect(t.transitions).toBe(235 + 235 + 236);
    expect(sum(t.pooled)).toBe(t.transitions);
    expect(t.conditional).toHaveLength(5);
    // The pooled table is the conditional ones added up.
    t.pooled.forEach((row, i) => row.forEach((v, j) => expect(t.conditional.reduce((s, table) => s + table[i][j], 0)).toBe(v)));
    expect(t.test).not.toBeNull();
    expect(t.test?.degreesOfFreedom).toBeGreaterThan(0);
    expect(t.test?.p).toBeGreaterThanOrEqual(0);
    expect(t.test?.p).toBeLessThanOrEqual(1);
    expect(t.note).toBeNull();
  });

  it("takes 3 or 4 classes, refuses other counts naming the field", async () => {
    signedInAs(reader);
    const three = (await (await getTransitions(getRequest(`indicator=${INDICATOR}&run=${runId}&classes=3`), ctx({ slug }))).json()) as { transitions: PanelTransitions };
    expect(three.transitions.pooled.map((row) => row.length)).toEqual([3, 3, 3]);
    const bad = await getTransitions(getRequest(`indicator=${INDICATOR}&run=${runId}&classes=7`), ctx({ slug }));
    expect(bad.status).toBe(400);
    expect(JSON.stringify(await bad.json())).toContain("classes");
  });

  it("is 404 for a run of another workspace and for an indicator the run did not analyse", async () => {
    signedInAs(outsider);
    const foreign = await getTransitions(getRequest(`indicator=${INDICATOR}&run=${runId}`), ctx({ slug: otherSlug }));
    expect(foreign.status).toBe(404);
    signedInAs(reader);
    const unknown = await getTransitions(getRequest(`indicator=broadband_coverage&run=${runId}`), ctx({ slug }));
    expect(unknown.status).toBe(404);
  });
});

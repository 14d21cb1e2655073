import { QueryTypes } from "sequelize";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { PUT as putOwn } from "@/app/api/w/[slug]/digests/route";
import { GET as getDesk } from "@/app/api/w/[slug]/desk/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { getOwnSubscription } from "@/lib/digests/queries";
import { runLabelOf } from "./run-label-of";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { CapturedMail } from "@/lib/mail/outbox";
import type { DeskSummary } from "@/lib/runs/queries";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "@/tests/integration/runs/fixtures";

// Like with like: a queen run, then a rook run, then a second queen run on one
// panel, through the run route and the test worker (which also sends the
// after-run digests to the SMTP sink). The rook run's digest and the Desk
// report a change of method and compare nothing; the second queen run
// compares with the first. Only the next-auth session is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(300_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let panel: LoadedPanel;
const runs: { queen1: number; rook: number; queen2: number } = { queen1: 0, rook: 0, queen2: 0 };
const started = new Date();

function signedInAs(user: { id: number; email: string; name: string }) {
  sessionMock.mockResolvedValue({ id: user.id, email: user.email, name: user.name } satisfies SessionUser);
}
const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const json = (method: string, body: unknown) => new Request("http://tessera.test/api", { method, headers: { "content-type": "application/json" }, body: JSON.stringify(body) });

async function subscribe(user: { id: number; email: string; name: string }) {
  signedInAs(user);
  const response = await putOwn(json("PUT", { cadence: "after_run", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so" }), ctx({ slug }));
  expect(response.status).toBe(200);
}

async function runAndWait(weights: string, seed: number): Promise<number> {
  signedInAs(users.analyst);
  const response = await postRun(json("POST", { panelVersionId: panel.panelVersionId, weights, seed, permutations: 199 }), ctx({ slug }));
  expect(response.status).toBe(201);
  const runId = ((await response.json()) as { runId: number }).runId;
  const state = await waitFor(
    `run ${runId} to finish (is the test worker running?)`,
    async () => {
      const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
      return row && ["completed", "failed", "cancelled"].includes(row.state) ? row.state : null;
    },
    { timeoutMs: 200_000, intervalMs: 500 },
  );
  expect(state).toBe("completed");
  return runId;
}

// After-run digests name the run by its number in the workspace; the mail's text gives its full label.
const digestOf = async (user: { email: string }, runId: number): Promise<CapturedMail> =>
  waitForMailTo(user.email, { since: started, subjectContains: `(results of ${(await runLabelOf(runId)).name})`, timeoutMs: 90_000 });

async function summaryOf(userId: number, runId: number) {
  const sub = await getOwnSubscription(workspaceId, userId);
  const [row] = await db().query<{ status: string; covered_run_id: number | null; summary: { baseline: unknown; previousRunId: number | null } }>(
    "SELECT status, covered_run_id, summary FROM digest_deliveries WHERE subscription_id = $1 AND run_id = $2",
    { bind: [sub?.id ?? 0, runId], type: QueryTypes.SELECT },
  );
  return row;
}

async function desk(): Promise<DeskSummary> {
  signedInAs(users.analyst);
  const response = await getDesk(new Request("http://tessera.test/api"), ctx({ slug }));
  expect(response.status).toBe(200);
  return (await response.json()) as DeskSummary;
}

// A change in I shown as a signed number with three decimals (render.ts `signed`).
const SIGNED_CHANGE = /[+−]\d+\.\d{3}/;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", early: "subscriber", late: "subscriber" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate", "broadband_coverage"], periods: ["2012", "2013", "2014"] });
  await subscribe(users.early);
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("a queen run, then a rook run, then a queen run on one panel", () => {
  it("the first digest a person receives compares with nothing", async () => {
    runs.queen1 = await runAndWait("queen", 777);
    const first = await digestOf(users.early, runs.queen1);
    expect(first.text).toContain("Your first digest of these results: there is no previous digest to compare with");
    expect(first.text).not.toContain("since your previous digest");
    expect(first.text).toContain(`Method of ${(await runLabelOf(runs.queen1)).label}: weights queen, transform row-standardised`);
    expect(await summaryOf(users.early.id, runs.queen1)).toMatchObject({ status: "sent", covered_run_id: runs.queen1, summary: { baseline: { kind: "first" }, previousRunId: null } });
  });

  it("the rook run's digest reports the change of method and no change in the data", async () => {
    // Subscribed after the queen run: the queen run exists, but no digest ever reached this person.
    await subscribe(users.late);
    runs.rook = await runAndWait("rook", 777);

    const mail = await digestOf(users.early, runs.rook);
    expect(mail.subject).toContain("method changed, no comparison");
    expect(mail.text).toContain(`Method changed since your previous digest (${(await runLabelOf(runs.queen1)).label}): weights changed from queen to rook; no comparison.`);
    expect(mail.html).toContain("weights changed from queen to rook; no comparison");
    expect(mail.text).not.toContain("since your previous digest)");
    expect(mail.text).not.toMatch(SIGNED_CHANGE);
    expect(mail.text).not.toContain("Largest changes in Moran's I");
    expect(mail.text).not.toContain("→");
    expect(await summaryOf(users.early.id, runs.rook)).toMatchObject({
      status: "sent",
      summary: { baseline: { kind: "method-changed", runId: runs.queen1, sentence: "weights changed from queen to rook; no comparison" }, largestChanges: 0 },
    });

    const late = await digestOf(users.late, runs.rook);
    expect(late.text).toContain("Your first digest of these results");
    expect(late.text).not.toContain("since your previous digest");
    expect(late.text).not.toContain("Method changed");
  });

  it("the Desk shows no movement between the queen and the rook run, only the change of method", async () => {
    const d = await desk();
    expect(d.latest?.id).toBe(runs.rook);
    expect(d.previous).toBeNull();
    expect(d.classChanges).toEqual([]);
    const [{ number }] = await db().query<{ number: number }>("SELECT number FROM runs WHERE id = $1", { bind: [runs.queen1], type: QueryTypes.SELECT });
    expect(d.methodChange).toEqual({ runId: runs.queen1, runNumber: number, sentence: "weights changed from queen to rook; no comparison" });
    // The largest movements are the rook run's own, from one period to the next.
    const [own] = await db().query<{ n: string }>("SELECT count(*) AS n FROM run_results WHERE run_id = $1 AND delta_i IS NOT NULL", { bind: [runs.rook], type: QueryTypes.SELECT });
    expect(d.movements.length).toBe(Math.min(6, Number(own.n)));
  });

  it("a second queen run compares with the first queen run, in the digest and on the Desk", async () => {
    runs.queen2 = await runAndWait("queen", 778);
    const mail = await digestOf(users.early, runs.queen2);
    expect(mail.text).toContain(`Compared with ${(await runLabelOf(runs.queen1)).label}, which your previous digest reported (same panel, same method).`);
    expect(mail.text).not.toContain("Method changed");
    expect(await summaryOf(users.early.id, runs.queen2)).toMatchObject({ status: "sent", summary: { baseline: { kind: "previous-digest", runId: runs.queen1 }, previousRunId: runs.queen1 } });

    // The same seed-independent numbers (I) as the first queen run: any change in I listed would be a delta against the rook run.
    const [moved] = await db().query<{ n: string }>(
      `SELECT count(*) AS n FROM run_results a JOIN run_results b ON b.run_id = $2 AND b.indicator_code = a.indicator_code AND b.period_key = a.period_key
        WHERE a.run_id = $1 AND abs(a.i - b.i) > 1e-9`,
      { bind: [runs.queen2, runs.queen1], type: QueryTypes.SELECT },
    );
    expect(Number(moved.n)).toBe(0);
    expect(mail.text).not.toContain("since your previous digest)");

    const d = await desk();
    expect(d.latest?.id).toBe(runs.queen2);
    expect(d.previous?.id).toBe(runs.queen1);
    expect(d.methodChange).toBeNull();
    for (const change of d.classChanges) expect(change.previousRunId).toBe(runs.queen1);
  });
});

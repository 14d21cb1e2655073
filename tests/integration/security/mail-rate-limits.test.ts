import { QueryTypes } from "sequelize";
import { POST as postSendNow } from "@/app/api/w/[slug]/digests/send-now/route";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { POST as postInvitation } from "@/app/api/w/[slug]/invitations/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { saveSubscription } from "@/lib/digests/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { RATE_LIMITS } from "@/lib/security/rate-limits";
import { requireTestServices, uniqueAddress } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "@/tests/integration/runs/fixtures";

// E-mail-producing actions are limited per user (lib/security/rate-limits):
// past the limit the route answers 429 with Retry-After and a sentence saying
// when to try again, and writes, queues and mails nothing.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(180_000);

type User = { id: number; email: string; name: string };
let slug: string;
let workspaceId: number;
let users: Record<string, User>;
let panel: LoadedPanel;

const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const post = (body: unknown = {}) => new Request("http://tessera.test/api", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
const signedInAs = (u: User) => sessionMock.mockResolvedValue({ id: u.id, email: u.email, name: u.name } satisfies SessionUser);

async function count(sql: string, bind: unknown[]): Promise<number> {
  const [row] = await db().query<{ n: string }>(sql, { bind, type: QueryTypes.SELECT });
  return Number(row.n);
}

async function expectRefused(response: Response, action: keyof typeof RATE_LIMITS) {
  expect(response.status).toBe(429);
  const retryAfter = Number(response.headers.get("retry-after"));
  expect(Number.isInteger(retryAfter)).toBe(true);
  expect(retryAfter).toBeGreaterThan(0);
  expect(retryAfter).toBeLessThanOrEqual(RATE_LIMITS[action].windowSeconds);
  const body = (await response.json()) as { error: string; retryAfterSeconds: number };
  expect(body.retryAfterSeconds).toBe(retryAfter);
  expect(body.error).toContain(`${RATE_LIMITS[action].points} times`);
  expect(body.error).toMatch(/Try again in \d+ (seconds?|minutes?) \(after \d\d:\d\d UTC\)\./);
}

/** Fills `user`'s window for `action` as if the limit had been used up, without doing the actions. */
async function useUp(action: keyof typeof RATE_LIMITS, user: User, expireInMs = 3_600_000) {
  await db().query(
    `INSERT INTO rate_limits (key, points, expire) VALUES ($1, $2, $3)
     ON CONFLICT (key) DO UPDATE SET points = EXCLUDED.points, expire = EXCLUDED.expire`,
    { bind: [`${action}:${user.id}`, RATE_LIMITS[action].points, Date.now() + expireInMs] },
  );
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ manager: "manager", economist: "economist", colleague: "economist" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate"], periods: ["2011", "2012"] });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("send digest now", () => {
  it(`allows ${RATE_LIMITS["digest-send-now"].points} per user per hour, then refuses with 429 and queues no job, writes no event`, async () => {
    const subscriptionId = await saveSubscription(workspaceId, users.economist.id, {
      cadence: "weekly",
      scope: "all",
      indicatorCodes: [],
      threshold: "every_change",
      emptyPolicy: "say_so",
      active: true,
    });
    const jobs = () => count("SELECT count(*) AS n FROM pgboss.job WHERE name = 'digest-send' AND data->>'subscriptionId' = $1", [String(subscriptionId)]);
    const events = () => count("SELECT count(*) AS n FROM audit_events WHERE workspace_id = $1 AND action = 'digest.sent-now'", [workspaceId]);
    signedInAs(users.economist);
    const limit = RATE_LIMITS["digest-send-now"].points;
    for (let i = 0; i < limit; i++) expect((await postSendNow(post(), ctx({ slug }))).status).toBe(202);
    expect(await jobs()).toBe(limit);
    await expectRefused(await postSendNow(post(), ctx({ slug })), "digest-send-now");
    await expectRefused(await postSendNow(post(), ctx({ slug })), "digest-send-now");
    expect(await jobs()).toBe(limit);
    expect(await events()).toBe(limit);
    // Every mail there is comes from an allowed request's job: once those are done, at most `limit` digests reached the member.
    await waitFor("the allowed digest jobs to finish", async () =>
      (await count("SELECT count(*) AS n FROM pgboss.job WHERE name = 'digest-send' AND data->>'subscriptionId' = $1 AND state IN ('created','retry','active')", [String(subscriptionId)])) === 0,
      { timeoutMs: 90_000 },
    );
    expect(await count("SELECT count(*) AS n FROM outbox_messages WHERE $1 = ANY(\"to\")", [users.economist.email.toLowerCase()])).toBeLessThanOrEqual(limit);
  });

  it("counts per user: a colleague in the same workspace is not held back", async () => {
    await saveSubscription(workspaceId, users.colleague.id, { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so", active: true });
    signedInAs(users.colleague);
    expect((await postSendNow(post(), ctx({ slug }))).status).toBe(202);
  });

  it("allows again once the window is over", async () => {
    await useUp("digest-send-now", users.colleague, -1);
    signedInAs(users.colleague);
    expect((await postSendNow(post(), ctx({ slug }))).status).toBe(202);
  });
});

describe("invitations", () => {
  it(`allows ${RATE_LIMITS.invitation.points} per user per hour, then refuses: no invitation stored, no job, no mail`, async () => {
    signedInAs(users.manager);
    const limit = RATE_LIMITS.invitation.points;
    const invited = () => count("SELECT count(*) AS n FROM invitations WHERE workspace_id = $1", [workspaceId]);
    for (let i = 0; i < limit; i++) {
      const response = await postInvitation(post({ email: uniqueAddress(`rl-${i}`), role: "subscriber" }), ctx({ slug }));
      expect(response.status).toBe(201);
    }
    const lastAllowed = uniqueAddress("rl-other");
    const refusedAddress = uniqueAddress("rl-refused");
    await expectRefused(await postInvitation(post({ email: refusedAddress, role: "subscriber" }), ctx({ slug })), "invitation");
    expect(await invited()).toBe(limit);
    expect(await count("SELECT count(*) AS n FROM pgboss.job WHERE name = 'invitation-email' AND data->>'to' = $1", [refusedAddress.toLowerCase()])).toBe(0);
    // Another manager's invitations are counted separately; its mail arrives, the refused one never does.
    const other = await makeWorkspace({ boss: "manager" });
    signedInAs(other.users.boss);
    expect((await postInvitation(post({ email: lastAllowed, role: "subscriber" }), ctx({ slug: other.workspace.slug }))).status).toBe(201);
    await waitFor("the allowed invitation's mail", async () => (await count("SELECT count(*) AS n FROM outbox_messages WHERE $1 = ANY(\"to\")", [lastAllowed.toLowerCase()])) > 0, { timeoutMs: 90_000 });
    expect(await count("SELECT count(*) AS n FROM outbox_messages WHERE $1 = ANY(\"to\")", [refusedAddress.toLowerCase()])).toBe(0);
  });
});

describe("starting runs (each completed run e-mails after-run subscribers)", () => {
  it("refuses a start and a rerun past the limit with 429, storing and queueing nothing", async () => {
    signedInAs(users.economist);
    const runs = () => count("SELECT count(*) AS n FROM runs WHERE workspace_id = $1", [workspaceId]);
    const pieceJobs = () => count("SELECT count(*) AS n FROM pgboss.job WHERE name = 'run-piece'", []);
    const started = await postRun(post({ panelVersionId: panel.panelVersionId, permutations: 99, local: false }), ctx({ slug }));
    expect(started.status).toBe(201);
    const { runId } = (await started.json()) as { runId: number };
    await useUp("run-start", users.economist);
    const before = { runs: await runs(), jobs: await pieceJobs() };
    await expectRefused(await postRun(post({ panelVersionId: panel.panelVersionId, permutations: 99, local: false }), ctx({ slug })), "run-start");
    await expectRefused(await postRerun(post(), ctx({ slug, runId: String(runId) })), "run-start");
    expect({ runs: await runs(), jobs: await pieceJobs() }).toEqual(before);
    signedInAs(users.colleague);
    expect((await postRerun(post(), ctx({ slug, runId: String(runId) }))).status).toBe(201);
  });
});

import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { UNAVAILABLE_MESSAGES, UNAVAILABLE_TITLES } from "@/lib/service-unavailable";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { clusterRunning, startCluster, stopCluster, testCluster, type TestCluster } from "@/tests/helpers/postgres-cluster";
import { signIn } from "@/tests/helpers/sign-in";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";

// PostgreSQL restarted while the app is serving. The suite's own cluster is
// stopped (pg_ctl stop -m fast: every session ends) and held down while the
// test asks the running `next start` for data, then started again. The app
// and the worker are not restarted: requests must fail cleanly during the
// outage and work again afterwards. A real browser signs in; API calls use
// plain fetch with its session cookie.

jest.setTimeout(300_000);

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");

/** Longest an answer may take during the outage (the pool's connect and acquire timeouts are 5 s and 10 s). */
const ANSWER_BOUND_MS = 20_000;

let session: BrowserSession;
let cluster: TestCluster;
let appUrl: string;
let cookie: string;

type Answer = { status: number; contentType: string; text: string };

/** One request with the signed-in cookie; throws if nothing comes back within the bound. */
async function call(method: string, pathname: string, body?: unknown): Promise<Answer> {
  const response = await fetch(`${appUrl}${pathname}`, {
    method,
    headers: { cookie, origin: appUrl, ...(body === undefined ? {} : { "content-type": "application/json" }) },
    body: body === undefined ? undefined : JSON.stringify(body),
    redirect: "manual",
    signal: AbortSignal.timeout(ANSWER_BOUND_MS),
  }).catch((err: unknown) => {
    throw new Error(`${method} ${pathname} got no answer within ${ANSWER_BOUND_MS} ms: ${err instanceof Error ? err.message : String(err)}`);
  });
  return { status: response.status, contentType: response.headers.get("content-type") ?? "", text: await response.text() };
}

const catalogueApi = `/api/w/${slug}/catalogue`;
const deskApi = `/api/w/${slug}/desk`;
const subscriptionApi = `/api/w/${slug}/digests`;
const weekly = { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so", active: true };

function expectCleanOutage(answer: Answer) {
  expect(answer.status).toBe(503);
  expect(answer.contentType).toMatch(/^application\/json/);
  expect(JSON.parse(answer.text)).toEqual({ error: UNAVAILABLE_MESSAGES.database, retryable: true });
}

beforeAll(async () => {
  ({ appUrl } = testServices());
  cluster = testCluster();
  session = await openBrowser();
  session.page.setDefaultTimeout(60_000);
  await signIn(session.page, economist.email, economist.password);
  const cookies = await session.context.cookies(appUrl);
  cookie = cookies.map((c) => `${c.name}=${c.value}`).join("; ");
  if (!cookies.some((c) => /session-token/.test(c.name))) throw new Error(`signing in set no session cookie (got ${cookies.map((c) => c.name).join(", ") || "none"})`);
});

afterAll(async () => {
  // Never leave the rest of the suite without its database.
  if (cluster && !(await clusterRunning(cluster))) await startCluster(cluster);
  await session?.close();
  await closeConnections();
});

describe("PostgreSQL restarted while the app is serving", () => {
  it("before: the signed-in economist gets the catalogue and desk APIs and the Catalogue page", async () => {
    const catalogue = await call("GET", catalogueApi);
    expect(catalogue.status).toBe(200);
    expect(Array.isArray((JSON.parse(catalogue.text) as { rows: unknown[] }).rows)).toBe(true);
    expect((await call("GET", deskApi)).status).toBe(200);
    expect((await call("PUT", subscriptionApi, weekly)).status).toBe(200);
    await session.page.goto(`/w/${slug}/catalogue`);
    await session.page.getByRole("heading", { name: "Catalogue", level: 1 }).waitFor();
  });

  it("during the outage: API requests answer 503 with a plain JSON sentence, and the Catalogue page shows the database error screen", async () => {
    await stopCluster(cluster);

    for (const [method, pathname, body] of [
      ["GET", catalogueApi, undefined],
      ["GET", deskApi, undefined],
      ["PUT", subscriptionApi, weekly],
      ["GET", catalogueApi, undefined],
    ] as const) {
      expectCleanOutage(await call(method, pathname, body));
    }

    const page = await call("GET", `/w/${slug}/catalogue`);
    expect(page.status).toBeGreaterThanOrEqual(500);
    expect(page.text).not.toMatch(/Sequelize|ECONNREFUSED|node_modules|\bat \S+ \(\//);

    const response = await session.page.goto(`/w/${slug}/catalogue`);
    expect(response?.status()).toBe(page.status);
    // (Next's route announcer is an empty role="alert" too.)
    const screen = session.page.getByRole("alert").filter({ has: session.page.getByRole("heading", { name: UNAVAILABLE_TITLES.database }) });
    await screen.waitFor();
    expect(await screen.textContent()).toContain(UNAVAILABLE_MESSAGES.database);
    await screenshot(session.page, "postgres-outage-catalogue");
  });

  it("after PostgreSQL is back: the same requests answer 200 again without restarting the app, and the page works", async () => {
    await startCluster(cluster);
    // Every pooled connection died with the old server; the first request must already get a fresh one.
    const catalogue = await call("GET", catalogueApi);
    expect(catalogue.status).toBe(200);
    expect((await call("GET", deskApi)).status).toBe(200);
    expect((await call("PUT", subscriptionApi, weekly)).status).toBe(200);
    expect((await call("GET", catalogueApi)).status).toBe(200);

    await session.page.goto(`/w/${slug}/catalogue`);
    await session.page.getByRole("heading", { name: "Catalogue", level: 1 }).waitFor();
    expect(await session.page.getByRole("heading", { name: UNAVAILABLE_TITLES.database }).count()).toBe(0);
  });

  it("the worker survived the restart too: a digest asked for afterwards is sent", async () => {
    const asked = await call("POST", `/api/w/${slug}/digests/send-now`);
    expect(asked.status).toBe(202);
    const { idempotencyKey } = JSON.parse(asked.text) as { idempotencyKey: string };
    const status = await waitFor(
      `the worker to send digest ${idempotencyKey} (is it still connected to PostgreSQL?)`,
      async () => {
        const [row] = await db().query<{ status: string }>("SELECT status FROM digest_deliveries WHERE idempotency_key = $1", { bind: [idempotencyKey], type: QueryTypes.SELECT });
        return row && row.status !== "queued" && row.status !== "sending" ? row.status : null;
      },
      { timeoutMs: 90_000, intervalMs: 500 },
    );
    expect(status).toBe("sent");
  });
});

import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import { GET as getAudit } from "@/app/api/w/[slug]/audit/route";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { POST as postPublish } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route";
import { POST as postArchive } from "@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/archive/route";
import { PUT as putIndicator } from "@/app/api/w/[slug]/intake/indicators/[code]/route";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { POST as postCancel } from "@/app/api/w/[slug]/runs/[runId]/cancel/route";
import { PUT as putDigest } from "@/app/api/w/[slug]/digests/route";
import { POST as postSendNow } from "@/app/api/w/[slug]/digests/send-now/route";
import { audit } from "@/lib/security/audit";
import { getSessionUser } from "@/lib/auth/session";
import type { AuditRow } from "@/lib/team/audit";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { resolveRunParams } from "@/lib/runs/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { insertRun } from "@/lib/runs/store";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { LONG_MAPPING, newBoundaryVersion, ticketThroughRoutes, uploadThroughRoutes, validated, versionState, type Kind } from "@/tests/integration/security/fixtures-intake";
import { asSession, ctx, gridGeoJson, jsonRequest, longPanel, sha256 } from "../intake/fixtures";
import { makeWorkspace, unique } from "./fixtures";

// Every data action a member performs, through the real route handlers
// against the real PostgreSQL, S3 (presigned PUT), job queue and worker; only
// "who is signed in" is stood in for. Each audited action must leave exactly
// one event naming the actor, the workspace and a readable target; each
// refused one, none.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(180_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
type User = Users[string];
type EventRow = { id: string; workspace_id: number; action: string; actor_id: number | null; actor_email: string | null; target: string | null; detail: Record<string, unknown> };

let slug: string;
let workspaceId: number;
let users: Users;
const setName = unique("Grid");
const panelName = unique("Jobs");

// Filled in as the steward's data goes through the steps below.
let boundaryUploadId: string;
let boundaryVersionId: number;
let panelVersionId: number;
let firstRunId: number;
let firstRunNumber: number;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ manager: "manager", steward: "steward", economist: "economist", subscriber: "subscriber" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  users = made.users;
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

function as(user: User): User {
  sessionMock.mockResolvedValue(asSession(user));
  return user;
}

async function lastEventId(): Promise<string> {
  const rows = await db().query<{ id: string }>("SELECT coalesce(max(id), 0)::text AS id FROM audit_events WHERE workspace_id = $1", { bind: [workspaceId], type: QueryTypes.SELECT });
  return rows[0].id;
}

/** Runs `act` and returns the events it added to this workspace's trail (this file acts alone in its workspace). */
async function recorded(act: () => Promise<unknown>): Promise<EventRow[]> {
  const mark = await lastEventId();
  await act();
  return db().query<EventRow>("SELECT id, workspace_id, action, actor_id, actor_email, target, detail FROM audit_events WHERE workspace_id = $1 AND id > $2 ORDER BY id", {
    bind: [workspaceId, mark],
    type: QueryTypes.SELECT,
  });
}

/** The one event an action wrote: its action, actor, workspace and target; returns its detail. */
function onlyEvent(events: EventRow[], action: string, actor: User, target: string): Record<string, unknown> {
  expect(events.map((e) => e.action)).toEqual([action]);
  expect(events[0]).toMatchObject({ workspace_id: workspaceId, actor_id: actor.id, actor_email: actor.email, target });
  return events[0].detail;
}

async function expectStatus(response: Promise<Response>, status: number): Promise<Record<string, unknown>> {
  const r = await response;
  const body = (await r.json()) as Record<string, unknown>;
  if (r.status !== status) throw new Error(`expected HTTP ${status}, got ${r.status}: ${JSON.stringify(body)}`);
  return body;
}

/** Step 1 and the browser's PUT of an upload, without completing it. */
async function putWithoutCompleting(kind: Kind, fileName: string, declared: string, sent: string = declared): Promise<string> {
  const ticket = await expectStatus(postUpload(jsonRequest("POST", { kind, fileName, size: Buffer.byteLength(declared), sha256: sha256(declared) }), ctx({ slug })), 201);
  const put = await fetch(String(ticket.url), { method: "PUT", headers: { "Content-Type": String(ticket.contentType) }, body: sent });
  expect(put.ok).toBe(true);
  return String(ticket.uploadId);
}

const complete = (uploadId: string) => postComplete(jsonRequest("POST"), ctx({ slug, uploadId }));
const publish = (kind: Kind, id: number) => postPublish(jsonRequest("POST"), ctx({ slug, kind, versionId: String(id) }));
const archive = (kind: Kind, id: number) => postArchive(jsonRequest("POST"), ctx({ slug, kind, versionId: String(id) }));
const saveIndicator = (code: string, body: unknown) => putIndicator(jsonRequest("PUT", body), ctx({ slug, code }));
const startRun = (body: unknown) => postRun(jsonRequest("POST", body), ctx({ slug }));

describe("intake actions on the audit trail", () => {
  it("records a completed upload once, with file name and size; a repeated completion, a damaged file and an economist record nothing", async () => {
    const steward = as(users.steward);
    const geojson = gridGeoJson();
    boundaryUploadId = await putWithoutCompleting("boundaries", "grid.geojson", geojson);
    const detail = onlyEvent(await recorded(() => expectStatus(complete(boundaryUploadId), 200)), "upload.completed", steward, 'boundary file "grid.geojson"');
    expect(detail).toMatchObject({ uploadId: boundaryUploadId, kind: "boundaries", fileName: "grid.geojson", size: Buffer.byteLength(geojson), sha256: sha256(geojson) });

    expect(await recorded(() => expectStatus(complete(boundaryUploadId), 200))).toEqual([]);

    const declared = longPanel();
    const damaged = declared.replace("G1,", "G7,");
    const damagedId = await putWithoutCompleting("panel", "damaged.csv", declared, damaged);
    expect(await recorded(() => expectStatus(complete(damagedId), 422))).toEqual([]);

    const pending = await putWithoutCompleting("panel", "pending.csv", longPanel({ years: [2018] }));
    as(users.economist);
    expect(await recorded(() => expectStatus(complete(pending), 403))).toEqual([]);
  });

  it("records a new boundary version and its publication; a bad body, an economist and a second publication record nothing", async () => {
    const steward = as(users.steward);
    expect(await recorded(() => expectStatus(postBoundaries(jsonRequest("POST", { uploadId: boundaryUploadId, setName, idProperty: "code" }), ctx({ slug })), 400))).toEqual([]);

    let created: Record<string, unknown> = {};
    const submitted = await recorded(async () => {
      created = await expectStatus(postBoundaries(jsonRequest("POST", { uploadId: boundaryUploadId, setName, objectName: "regions", idProperty: "code", nameProperty: "name" }), ctx({ slug })), 202);
    });
    boundaryVersionId = Number(created.id);
    const target = `boundaries "${setName}" v1`;
    expect(onlyEvent(submitted, "version.submitted", steward, target)).toMatchObject({ kind: "boundaries", versionId: boundaryVersionId, uploadId: boundaryUploadId, fileName: "grid.geojson" });
    await validated("boundaries", boundaryVersionId);

    as(users.economist);
    expect(await recorded(() => expectStatus(publish("boundaries", boundaryVersionId), 403))).toEqual([]);

    as(steward);
    const published = await recorded(() => expectStatus(publish("boundaries", boundaryVersionId), 200));
    expect(onlyEvent(published, "version.published", steward, target)).toMatchObject({ kind: "boundaries", versionId: boundaryVersionId });
    expect(await recorded(() => expectStatus(publish("boundaries", boundaryVersionId), 409))).toEqual([]);
  });

  it("records a new panel version and its publication with the panel's name and version number", async () => {
    const steward = as(users.steward);
    const uploadId = await uploadThroughRoutes(slug, "panel", "jobs.csv", longPanel());
    let created: Record<string, unknown> = {};
    const submitted = await recorded(async () => {
      created = await expectStatus(
        postPanels(jsonRequest("POST", { uploadId, panelName, boundarySetId: await boundarySetId(), decimal: ".", mapping: LONG_MAPPING }), ctx({ slug })),
        202,
      );
    });
    panelVersionId = Number(created.id);
    const target = `panel "${panelName}" v1`;
    expect(onlyEvent(submitted, "version.submitted", steward, target)).toMatchObject({ kind: "panel", versionId: panelVersionId, fileName: "jobs.csv", layout: "long", boundaryVersionId });
    await validated("panel", panelVersionId);
    const published = await recorded(() => expectStatus(publish("panel", panelVersionId), 200));
    expect(onlyEvent(published, "version.published", steward, target)).toMatchObject({ kind: "panel", versionId: panelVersionId });
  });

  it("records who archived which version; archiving it again or archiving boundaries a published panel uses records nothing", async () => {
    as(users.steward);
    const reformatted = JSON.stringify(JSON.parse(gridGeoJson()) as unknown, null, 1);
    const ticket = await ticketThroughRoutes(slug, "boundaries", "grid-v2.geojson", reformatted);
    const second = await newBoundaryVersion(slug, { uploadId: ticket.uploadId, boundarySetId: await boundarySetId() });
    await validated("boundaries", second.id);

    const manager = as(users.manager);
    const archived = await recorded(() => expectStatus(archive("boundaries", second.id), 200));
    expect(onlyEvent(archived, "version.archived", manager, `boundaries "${setName}" v2`)).toMatchObject({ kind: "boundaries", versionId: second.id, from: "validated" });
    expect(await recorded(() => expectStatus(archive("boundaries", second.id), 409))).toEqual([]);
    expect(await recorded(() => expectStatus(archive("boundaries", boundaryVersionId), 409))).toEqual([]);
    expect(await versionState("boundaries", boundaryVersionId)).toBe("published");
  });

  it("records indicator metadata edits with the fields that changed; an empty label and an economist record nothing", async () => {
    const steward = as(users.steward);
    const first = onlyEvent(await recorded(() => expectStatus(saveIndicator("jobless_rate", { label: "Jobless rate", unit: "%" }), 200)), "indicator.updated", steward, 'indicator "jobless_rate"');
    expect(first.code).toBe("jobless_rate");
    // Whether the panel's ingest already made the indicator or this call did, the label is among what was set.
    expect(first.created === true || (Array.isArray(first.changed) && first.changed.includes("label"))).toBe(true);

    const second = onlyEvent(await recorded(() => expectStatus(saveIndicator("jobless_rate", { label: "Jobless rate", unit: "% of labour force" }), 200)), "indicator.updated", steward, 'indicator "jobless_rate"');
    expect(second).toEqual({ code: "jobless_rate", created: false, changed: ["unit"] });

    expect(await recorded(() => expectStatus(saveIndicator("jobless_rate", { label: "" }), 400))).toEqual([]);
    as(users.economist);
    expect(await recorded(() => expectStatus(saveIndicator("jobless_rate", { label: "Economist's label" }), 403))).toEqual([]);
  });
});

async function boundarySetId(): Promise<number> {
  const rows = await db().query<{ id: number }>("SELECT id FROM boundary_sets WHERE workspace_id = $1 AND name = $2", { bind: [workspaceId, setName], type: QueryTypes.SELECT });
  if (!rows[0]) throw new Error(`boundary set ${setName} is missing: the boundary test above must run first`);
  return rows[0].id;
}

describe("run and digest actions on the audit trail", () => {
  it("records a started run with a summary of its parameters; a subscriber, a bad body and an unknown indicator record nothing", async () => {
    as(users.subscriber);
    expect(await recorded(() => expectStatus(startRun({ panelVersionId }), 403))).toEqual([]);
    const economist = as(users.economist);
    expect(await recorded(() => expectStatus(startRun({ panelVersionId, permutations: 10 }), 400))).toEqual([]);
    expect(await recorded(() => expectStatus(startRun({ panelVersionId, indicators: ["no_such_indicator"] }), 422))).toEqual([]);

    let started: Record<string, unknown> = {};
    const events = await recorded(async () => {
      started = await expectStatus(startRun({ panelVersionId, seed: 77, permutations: 99, local: false }), 201);
    });
    firstRunId = Number(started.runId);
    firstRunNumber = Number(started.number);
    // The trail names the run as the screens do: its number in the workspace, panel version, weights and permutations.
    expect(onlyEvent(events, "run.started", economist, `Run ${firstRunNumber} · ${panelName} v1 · queen, row-standardised · 99 perm.`)).toEqual({
      runId: firstRunId,
      runNumber: firstRunNumber,
      panelVersionId,
      indicators: 2,
      periods: 3,
      weights: "queen",
      permutations: 99,
      seed: 77,
      local: false,
      origin: "user",
    });
  });

  it("records a rerun with the run it repeats; a rerun of a run that does not exist records nothing", async () => {
    const steward = as(users.steward);
    expect(await recorded(() => expectStatus(postRerun(jsonRequest("POST", {}), ctx({ slug, runId: "999999999" })), 404))).toEqual([]);
    let answer: Record<string, unknown> = {};
    const events = await recorded(async () => {
      answer = await expectStatus(postRerun(jsonRequest("POST", {}), ctx({ slug, runId: String(firstRunId) })), 201);
    });
    const rerunId = Number(answer.runId);
    const rerunNumber = Number(answer.number);
    expect(rerunNumber).toBe(firstRunNumber + 1);
    expect(onlyEvent(events, "run.rerun", steward, `Run ${rerunNumber} · ${panelName} v1 · queen, row-standardised · 99 perm.`)).toMatchObject({
      runId: rerunId,
      runNumber: rerunNumber,
      rerunOf: firstRunId,
      rerunOfNumber: firstRunNumber,
      seed: 77,
      permutations: 99,
      origin: "rerun",
    });
  });

  it("records a cancellation once; cancelling it again and a subscriber's attempt record nothing", async () => {
    // A queued run whose pieces were never queued, so no worker can finish it before the cancel arrives.
    const params = await resolveRunParams(workspaceId, panelVersionId, runParamsInputSchema.parse({ seed: 5, permutations: 99, local: false }));
    const runId = await insertRun({ workspaceId, params, createdBy: users.economist.id, origin: "user" });
    const cancel = () => postCancel(jsonRequest("POST", {}), ctx({ slug, runId: String(runId) }));

    as(users.subscriber);
    expect(await recorded(() => expectStatus(cancel(), 403))).toEqual([]);
    const economist = as(users.economist);
    const events = await recorded(() => expectStatus(cancel(), 200));
    const [{ number }] = await db().query<{ number: number }>("SELECT number FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
    expect(onlyEvent(events, "run.cancelled", economist, `Run ${number} · ${panelName} v1 · queen, row-standardised · 99 perm.`)).toEqual({ runId, runNumber: number, panelVersionId });
    expect(await recorded(() => expectStatus(cancel(), 409))).toEqual([]);
  });

  it("records a digest sent on request; asking without a subscription records nothing", async () => {
    const subscriber = as(users.subscriber);
    const sendNow = () => postSendNow(jsonRequest("POST"), ctx({ slug }));
    expect(await recorded(() => expectStatus(sendNow(), 409))).toEqual([]);
    await expectStatus(putDigest(jsonRequest("PUT", { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so", active: true }), ctx({ slug })), 200);

    let answer: Record<string, unknown> = {};
    const events = await recorded(async () => {
      answer = await expectStatus(sendNow(), 202);
    });
    const detail = onlyEvent(events, "digest.sent-now", subscriber, `digest to ${subscriber.email}`);
    expect(detail).toMatchObject({ cadence: "weekly", idempotencyKey: answer.idempotencyKey });
    const [own] = await db().query<{ id: number }>("SELECT id FROM digest_subscriptions WHERE workspace_id = $1 AND user_id = $2", {
      bind: [workspaceId, subscriber.id],
      type: QueryTypes.SELECT,
    });
    expect(detail.subscriptionId).toBe(own.id);
  });
});

describe("an action and its audit event commit together", () => {
  // A trigger that refuses audit rows of this workspace only: the action must then fail whole.
  const name = `audit_refuse_${randomBytes(4).toString("hex")}`;
  const refuseAuditRows = async () => {
    await db().query(`CREATE FUNCTION ${name}() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'audit row refused by the test'; END $$`);
    await db().query(`CREATE TRIGGER ${name} BEFORE INSERT ON audit_events FOR EACH ROW WHEN (NEW.workspace_id = ${Number(workspaceId)}) EXECUTE FUNCTION ${name}()`);
  };
  const allowAuditRows = async () => {
    await db().query(`DROP TRIGGER IF EXISTS ${name} ON audit_events`);
    await db().query(`DROP FUNCTION IF EXISTS ${name}()`);
  };
  afterAll(allowAuditRows);

  it("leaves the upload pending, the version unpublished, the label and the runs unchanged when the audit row cannot be written", async () => {
    const steward = as(users.steward);
    const text = JSON.stringify(JSON.parse(gridGeoJson()) as unknown, null, 2);
    const third = await newBoundaryVersion(slug, { uploadId: (await ticketThroughRoutes(slug, "boundaries", "grid-v3.geojson", text)).uploadId, boundarySetId: await boundarySetId() });
    await validated("boundaries", third.id);
    const pendingUpload = await putWithoutCompleting("panel", "late.csv", longPanel({ years: [2017] }));
    const label = async () =>
      (await db().query<{ label: string }>("SELECT label FROM indicators WHERE workspace_id = $1 AND code = 'jobless_rate'", { bind: [workspaceId], type: QueryTypes.SELECT }))[0]?.label;
    const runCount = async () => (await db().query<{ n: number }>("SELECT count(*)::int AS n FROM runs WHERE workspace_id = $1", { bind: [workspaceId], type: QueryTypes.SELECT }))[0].n;
    const uploadState = async () => (await db().query<{ state: string }>("SELECT state FROM uploads WHERE id = $1", { bind: [pendingUpload], type: QueryTypes.SELECT }))[0]?.state;
    const labelBefore = await label();
    const runsBefore = await runCount();

    const quiet = jest.spyOn(console, "error").mockImplementation(() => undefined);
    try {
      await refuseAuditRows();
      const events = await recorded(async () => {
        await expectStatus(publish("boundaries", third.id), 500);
        await expectStatus(saveIndicator("jobless_rate", { label: "Never stored" }), 500);
        await expectStatus(complete(pendingUpload), 500);
        as(users.economist);
        await expectStatus(startRun({ panelVersionId, seed: 3, permutations: 99, local: false }), 500);
      });
      expect(events).toEqual([]);
    } finally {
      await allowAuditRows();
      quiet.mockRestore();
    }
    expect(await versionState("boundaries", third.id)).toBe("validated");
    expect(await label()).toBe(labelBefore);
    expect(await uploadState()).toBe("pending");
    expect(await runCount()).toBe(runsBefore);

    // With the trail writable again the same completion goes through, recorded once.
    as(steward);
    onlyEvent(await recorded(() => expectStatus(complete(pendingUpload), 200)), "upload.completed", steward, 'panel file "late.csv"');
  });
});

describe("the audit API", () => {
  it("shows the data actions to a manager, with actor and target, and to no one else", async () => {
    const manager = as(users.manager);
    const response = await getAudit(new Request("http://tessera.test"), ctx({ slug }));
    expect(response.status).toBe(200);
    const events = ((await response.json()) as { events: AuditRow[] }).events;
    const actions = new Set(events.map((e) => e.action));
    for (const action of ["upload.completed", "version.submitted", "version.published", "version.archived", "indicator.updated", "run.started", "run.rerun", "run.cancelled", "digest.sent-now"]) {
      expect(actions).toContain(action);
    }
    const started = events.find((e) => e.action === "run.started");
    expect(started).toMatchObject({ actor: `${users.economist.name} (${users.economist.email})`, target: `Run ${firstRunNumber} · ${panelName} v1 · queen, row-standardised · 99 perm.` });
    expect(events.find((e) => e.action === "version.archived")?.actor).toBe(`${manager.name} (${manager.email})`);

    as(users.steward);
    expect((await getAudit(new Request("http://tessera.test"), ctx({ slug }))).status).toBe(403);
  });

  it("names the actor with the account's e-mail when an event was recorded without one (a script's run)", async () => {
    await audit({ workspaceId, actorId: users.steward.id, actorEmail: null, action: "run.started", target: "run started by a script" });
    as(users.manager);
    const events = ((await (await getAudit(new Request("http://tessera.test"), ctx({ slug }))).json()) as { events: AuditRow[] }).events;
    expect(events.find((e) => e.target === "run started by a script")?.actor).toBe(`${users.steward.name} (${users.steward.email})`);
  });
});

import { QueryTypes } from "sequelize";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { GET as getPreview } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/preview/route";
import { POST as postBoundaries } from "@/app/api/w/[slug]/intake/boundaries/route";
import { putFailureMessage } from "@/components/intake/upload-file";
import { requireMember, type MemberContext } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { createBoundaryVersion } from "@/lib/intake/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { runIntakeValidation } from "@/lib/intake/jobs";
import { requireTestServices } from "@/tests/helpers/env";
import { ownS3rver, type OwnS3rver } from "@/tests/helpers/service-process";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest, sha256 } from "@/tests/integration/intake/fixtures";

// S3 unavailable during an upload. The code under test talks to a second
// s3rver that this file starts and stops on a port of its own (S3_ENDPOINT is
// set before anything reads the configuration), so the suite's shared s3rver
// is never interrupted. PostgreSQL and pg-boss are the suite's real ones; only
// "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(90_000);

const BUCKET = "tessera-fault";
let store: OwnS3rver;
let slug: string;
let workspaceId: number;
let steward: MemberContext;
const started = new Date();
const file = Buffer.from(gridGeoJson(3, "S"), "utf8");
const fileSha = sha256(file);

type Ticket = { uploadId: string; url: string; contentType: string };
type Failure = { error: string; retryable?: boolean };

async function requestTicket() {
  const response = await postUpload(jsonRequest("POST", { kind: "boundaries", fileName: "squares.geojson", size: file.length, sha256: fileSha }), ctx({ slug }));
  return { status: response.status, body: (await response.json()) as Ticket & Failure };
}

async function complete(uploadId: string) {
  const response = await postComplete(jsonRequest("POST"), ctx({ slug, uploadId }));
  return { status: response.status, body: (await response.json()) as { state?: string } & Partial<Failure> };
}

/** What the browser's XHR does, reduced to its outcome: a status, or "network" when nothing answered. */
async function browserPut(ticket: Ticket): Promise<number | "network"> {
  try {
    const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(file) });
    return response.status;
  } catch {
    return "network";
  }
}

async function uploadsOfWorkspace() {
  return db().query<{ id: string; state: string }>("SELECT id, state FROM uploads WHERE workspace_id = $1 ORDER BY created_at", { bind: [workspaceId], type: QueryTypes.SELECT });
}

async function versionsOfWorkspace(): Promise<number> {
  const rows = await db().query<{ n: string }>(
    "SELECT count(*) AS n FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id WHERE s.workspace_id = $1",
    { bind: [workspaceId], type: QueryTypes.SELECT },
  );
  return Number(rows[0]?.n ?? 0);
}

/** intake-validate jobs queued since this file started (nothing else in this suite queues them while it runs). */
async function validationJobsSinceStart(): Promise<number> {
  const rows = await db().query<{ n: string }>("SELECT count(*) AS n FROM pgboss.job WHERE name = 'intake-validate' AND created_on >= $1", {
    bind: [started.toISOString()],
    type: QueryTypes.SELECT,
  });
  return Number(rows[0]?.n ?? 0);
}

function expectPlainOutageMessage(failure: Failure) {
  expect(failure.error).toMatch(/^The file store \(S3 bucket "tessera-fault"\) is unavailable, so .+\. Try again in a few minutes\.$/);
  // A sentence for a person: no stack frames, no error class names, no socket codes.
  expect(failure.error).not.toMatch(/\n|\bat \S+:\d+|ECONNREFUSED|Error:/);
  expect(failure.retryable).toBe(true);
}

async function expectNothingRecordedAsUploaded() {
  expect((await uploadsOfWorkspace()).filter((u) => u.state === "received")).toEqual([]);
  expect(await versionsOfWorkspace()).toBe(0);
  expect(await validationJobsSinceStart()).toBe(0);
}

beforeAll(async () => {
  store = await ownS3rver(BUCKET);
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
  steward = await requireMember(slug, "data.curate");
});

afterAll(async () => {
  await store?.remove();
  await closeIntakePool();
  await closeConnections();
});

describe("S3 unavailable during an upload", () => {
  it("with the file store down, asking to upload answers 503 naming the store, and records no upload", async () => {
    await store.stop();
    const ticket = await requestTicket();
    expect(ticket.status).toBe(503);
    expectPlainOutageMessage(ticket.body);
    expect(ticket.body.error).toContain("so the file could not be stored");
    expect(await uploadsOfWorkspace()).toEqual([]);
    await expectNothingRecordedAsUploaded();
  });

  it("when the store goes down after the ticket, the browser's PUT fails with a plain sentence, completing answers 503, and nothing counts as uploaded", async () => {
    await store.start();
    const ticket = await requestTicket();
    expect(ticket.status).toBe(201);
    await store.stop();

    const outcome = await browserPut(ticket.body);
    expect(outcome).toBe("network");
    // The sentence the upload screen shows for exactly this outcome.
    expect(putFailureMessage(outcome)).toMatch(/^The file store did not answer, so the file was not uploaded .*try again in a few minutes\.$/);

    const serverLog = jest.spyOn(console, "warn").mockImplementation(() => undefined);
    const checked = await complete(ticket.body.uploadId);
    expect(checked.status).toBe(503);
    expectPlainOutageMessage({ error: checked.body.error ?? "", retryable: checked.body.retryable });
    expect(checked.body.error).toContain("so the file could not be checked");
    // The detail (operation, object, endpoint, cause) goes to the server log, one line.
    expect(serverLog).toHaveBeenCalledWith(expect.stringMatching(new RegExp(`S3 HEAD s3://${BUCKET}/\\S+ at http://127\\.0\\.0\\.1:${store.port} failed: .*ECONNREFUSED`)));
    serverLog.mockRestore();

    // The upload stays pending (not received, not blamed on the file), so no version can be made from it.
    expect(await uploadsOfWorkspace()).toEqual([{ id: ticket.body.uploadId, state: "pending" }]);
    const version = await postBoundaries(jsonRequest("POST", { uploadId: ticket.body.uploadId, setName: "Squares", objectName: "regions", idProperty: "code" }), ctx({ slug }));
    expect(version.status).toBe(409);
    expect(((await version.json()) as Failure).error).toBe("This upload has not been completed yet.");
    await expectNothingRecordedAsUploaded();

    // Back up: the bytes never arrived, so completing now says so and fails that upload (the user uploads again).
    await store.start();
    const late = await complete(ticket.body.uploadId);
    expect(late.status).toBe(422);
    expect(late.body.state).toBe("failed");
    expect(late.body.error).toMatch(/never reached storage/);
    await expectNothingRecordedAsUploaded();
  });

  it("when the store drops out between the PUT and the check, completing answers 503 and the same upload completes once the store is back", async () => {
    const ticket = await requestTicket();
    expect(ticket.status).toBe(201);
    expect(await browserPut(ticket.body)).toBe(200);
    await store.stop();
    const during = await complete(ticket.body.uploadId);
    expect(during.status).toBe(503);
    expectPlainOutageMessage({ error: during.body.error ?? "", retryable: during.body.retryable });
    expect((await uploadsOfWorkspace()).find((u) => u.id === ticket.body.uploadId)?.state).toBe("pending");
    await expectNothingRecordedAsUploaded();

    await store.start();
    const after = await complete(ticket.body.uploadId);
    expect(after.status).toBe(200);
    expect(after.body.state).toBe("received");
  });

  it("with the store back, the same file uploads from the start, is checked, and becomes a validated boundary version", async () => {
    const ticket = await requestTicket();
    expect(ticket.status).toBe(201);
    expect(await browserPut(ticket.body)).toBe(200);
    const checked = await complete(ticket.body.uploadId);
    expect(checked).toEqual({ status: 200, body: expect.objectContaining({ state: "received", error: null }) });

    const preview = await getPreview(new Request("http://tessera.test"), ctx({ slug, uploadId: ticket.body.uploadId }));
    expect(preview.status).toBe(200);
    const previewBody = (await preview.json()) as { preview: { summary: { objects: { name: string; count: number }[] } } };
    expect(previewBody.preview.summary.objects[0]).toMatchObject({ name: "regions", geometries: 9 });

    // The suite's worker reads the suite's s3rver, not this file's, so the
    // validation job's work is done here, by the same function the worker calls.
    const version = await createBoundaryVersion(steward, { uploadId: ticket.body.uploadId, setName: "Squares", objectName: "regions", idProperty: "code" }, { enqueueJob: false });
    await runIntakeValidation({ kind: "boundaries", versionId: version.id });
    const [row] = await db().query<{ state: string; region_count: number }>("SELECT state, region_count FROM boundary_versions WHERE id = $1", {
      bind: [version.id],
      type: QueryTypes.SELECT,
    });
    expect(row).toEqual({ state: "validated", region_count: 9 });
  });
});

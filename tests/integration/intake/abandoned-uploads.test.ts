import { QueryTypes } from "sequelize";
import { requireMember, type MemberContext } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { completeUpload, createBoundaryVersion, createUpload, type UploadTicket } from "@/lib/intake/service";
import { sweepAbandonedUploads } from "@/lib/intake/abandoned-uploads-sweep";
import { headObject } from "@/lib/storage/s3";
import { requireTestServices } from "@/tests/helpers/env";
import { ownS3rver, type OwnS3rver } from "@/tests/helpers/service-process";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, gridGeoJson, sha256 } from "@/tests/integration/intake/fixtures";

// The sweep of uploads started but never completed, failed, or received and
// never used by a version, against the suite's
// PostgreSQL and an s3rver of this file's own (S3_ENDPOINT is set before
// anything reads the configuration), which it stops to play a store outage
// without touching the store the other tests share. Tickets are issued and
// files PUT as the upload screen does; only their age is moved back, in SQL.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(90_000);

const BUCKET = "tessera-sweep";
/** Only this file names a boundary set so, which lets it find the workspaces an interrupted earlier run left behind. */
const SET_NAME = "Sweep squares (abandoned-uploads test)";
let store: OwnS3rver;
let workspaceId: number;
let steward: MemberContext;
let fileCount = 0;

interface Issued extends UploadTicket {
  s3Key: string;
  bytes: Buffer;
}

/** A boundaries upload ticket for a file of its own (distinct bytes, so no duplicate check refuses it). */
async function issue(): Promise<Issued> {
  fileCount += 1;
  const bytes = Buffer.from(gridGeoJson(2, `S${fileCount}x`), "utf8");
  const ticket = await createUpload(steward, { kind: "boundaries", fileName: `sweep-${fileCount}.geojson`, size: bytes.length, sha256: sha256(bytes) });
  const [row] = await db().query<{ s3_key: string }>("SELECT s3_key FROM uploads WHERE id = $1", { bind: [ticket.uploadId], type: QueryTypes.SELECT });
  return { ...ticket, s3Key: row.s3_key, bytes };
}

/** The browser's PUT to the presigned URL. */
async function put(ticket: Issued): Promise<void> {
  const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(ticket.bytes) });
  if (!response.ok) throw new Error(`PUT of ${ticket.s3Key} answered ${response.status}: ${await response.text()}`);
}

/** Moves an upload's ticket `hours` into the past; its PUT URL lived an hour, as createUpload issues it. */
async function age(uploadId: string, hours: number): Promise<void> {
  await db().query("UPDATE uploads SET created_at = now() - make_interval(hours => $2), expires_at = now() - make_interval(hours => $2) + interval '1 hour' WHERE id = $1", {
    bind: [uploadId, hours],
  });
}

async function setId(): Promise<number> {
  const [row] = await db().query<{ id: number }>("SELECT id FROM boundary_sets WHERE workspace_id = $1 AND name = $2", { bind: [workspaceId, SET_NAME], type: QueryTypes.SELECT });
  return row.id;
}

async function uploadState(uploadId: string): Promise<string> {
  const [row] = await db().query<{ state: string }>("SELECT state FROM uploads WHERE id = $1", { bind: [uploadId], type: QueryTypes.SELECT });
  return row?.state ?? "gone";
}

async function storedFile(key: string): Promise<"present" | "absent"> {
  return (await headObject(key)) ? "present" : "absent";
}

beforeAll(async () => {
  delete process.env.UPLOAD_ABANDON_HOURS;
  store = await ownS3rver(BUCKET);
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  workspaceId = made.workspace.id;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
  steward = await requireMember(made.workspace.slug, "data.curate");
  // What an interrupted earlier run of this file left would change the counts.
  await db().query("DELETE FROM workspaces WHERE id IN (SELECT workspace_id FROM boundary_sets WHERE name = $1)", { bind: [SET_NAME] });
  await sweepAbandonedUploads({ log: () => undefined });
});

afterAll(async () => {
  // The workspace's uploads, versions and audit events go with it (foreign-key cascades).
  if (workspaceId) await db().query("DELETE FROM workspaces WHERE id = $1", { bind: [workspaceId] });
  await store?.remove();
  await closeConnections();
});

describe("sweeping uploads that were never completed, failed, or were never used (UPLOAD_ABANDON_HOURS unset: 24 h)", () => {
  const uploads: Record<string, Issued> = {};
  let report: Awaited<ReturnType<typeof sweepAbandonedUploads>>;
  const logged: string[] = [];

  beforeAll(async () => {
    uploads.oldWithFile = await issue();
    await put(uploads.oldWithFile);
    await age(uploads.oldWithFile.uploadId, 48);

    uploads.oldNoFile = await issue();
    await age(uploads.oldNoFile.uploadId, 48);

    uploads.recent = await issue();
    await put(uploads.recent);
    await age(uploads.recent.uploadId, 23);

    uploads.received = await issue();
    await put(uploads.received);
    expect((await completeUpload(steward, uploads.received.uploadId)).state).toBe("received");
    await age(uploads.received.uploadId, 48);

    uploads.versioned = await issue();
    await put(uploads.versioned);
    await completeUpload(steward, uploads.versioned.uploadId);
    await createBoundaryVersion(steward, { uploadId: uploads.versioned.uploadId, setName: SET_NAME, objectName: "regions", idProperty: "code" }, { enqueueJob: false });
    await age(uploads.versioned.uploadId, 48);

    uploads.versionedPending = await issue();
    await put(uploads.versionedPending);
    await completeUpload(steward, uploads.versionedPending.uploadId);
    await createBoundaryVersion(steward, { uploadId: uploads.versionedPending.uploadId, boundarySetId: await setId(), objectName: "regions", idProperty: "code" }, { enqueueJob: false });
    // Set back to pending: a version naming it keeps it whatever its state.
    await db().query("UPDATE uploads SET state = 'pending' WHERE id = $1", { bind: [uploads.versionedPending.uploadId] });
    await age(uploads.versionedPending.uploadId, 48);

    // Completed before any byte arrived: failed, no object.
    uploads.failedNoFile = await issue();
    expect((await completeUpload(steward, uploads.failedNoFile.uploadId)).state).toBe("failed");
    await age(uploads.failedNoFile.uploadId, 48);

    // Failed, and then the still-valid URL brought the file anyway: a failed row with an object.
    uploads.failedLatePut = await issue();
    expect((await completeUpload(steward, uploads.failedLatePut.uploadId)).state).toBe("failed");
    await put(uploads.failedLatePut);
    await age(uploads.failedLatePut.uploadId, 48);

    uploads.recentFailed = await issue();
    expect((await completeUpload(steward, uploads.recentFailed.uploadId)).state).toBe("failed");
    await put(uploads.recentFailed);
    await age(uploads.recentFailed.uploadId, 23);

    uploads.recentReceived = await issue();
    await put(uploads.recentReceived);
    await completeUpload(steward, uploads.recentReceived.uploadId);
    await age(uploads.recentReceived.uploadId, 23);

    expect(await storedFile(uploads.oldWithFile.s3Key)).toBe("present");
    expect(await storedFile(uploads.oldNoFile.s3Key)).toBe("absent");
    report = await sweepAbandonedUploads({ log: (line) => logged.push(line) });
  });

  it("deletes an old pending upload whose file reached the store, and its stored file", async () => {
    expect(await uploadState(uploads.oldWithFile.uploadId)).toBe("gone");
    expect(await storedFile(uploads.oldWithFile.s3Key)).toBe("absent");
  });

  it("deletes an old pending upload whose file never arrived", async () => {
    expect(await uploadState(uploads.oldNoFile.uploadId)).toBe("gone");
  });

  it("leaves a pending upload younger than 24 hours, and its file, alone", async () => {
    expect(await uploadState(uploads.recent.uploadId)).toBe("pending");
    expect(await storedFile(uploads.recent.s3Key)).toBe("present");
  });

  it("deletes an old received upload that no version uses, and its stored file", async () => {
    expect(await uploadState(uploads.received.uploadId)).toBe("gone");
    expect(await storedFile(uploads.received.s3Key)).toBe("absent");
  });

  it("deletes old failed uploads, and the file a late PUT stored for one", async () => {
    expect(await uploadState(uploads.failedNoFile.uploadId)).toBe("gone");
    expect(await uploadState(uploads.failedLatePut.uploadId)).toBe("gone");
    expect(await storedFile(uploads.failedLatePut.s3Key)).toBe("absent");
  });

  it("leaves failed and received uploads younger than 24 hours, and their files, alone", async () => {
    expect(await uploadState(uploads.recentFailed.uploadId)).toBe("failed");
    expect(await storedFile(uploads.recentFailed.s3Key)).toBe("present");
    expect(await uploadState(uploads.recentReceived.uploadId)).toBe("received");
    expect(await storedFile(uploads.recentReceived.s3Key)).toBe("present");
  });

  it.each(["versioned", "versionedPending"])("leaves an old upload that a boundary version names (%s), its file and the version's own copy alone", async (name) => {
    const upload = uploads[name];
    expect(await uploadState(upload.uploadId)).toBe(name === "versioned" ? "received" : "pending");
    expect(await storedFile(upload.s3Key)).toBe("present");
    const [version] = await db().query<{ upload_id: string; s3_key: string; file_key: string }>("SELECT upload_id, s3_key, file_key FROM boundary_versions WHERE upload_id = $1", {
      bind: [upload.uploadId],
      type: QueryTypes.SELECT,
    });
    expect(version.s3_key).toBe(version.file_key);
    expect(version.file_key).toMatch(new RegExp(`^workspaces/${workspaceId}/versions/boundaries/\\d+/${sha256(upload.bytes)}$`));
    expect(await storedFile(version.file_key)).toBe("present");
  });

  it("reports what it examined, deleted, removed and kept, and logs nothing when the store answered", () => {
    // Examined: the two old pending, the unused received and the two failed ones; uploads versions name are not candidates.
    expect(report).toEqual({ examined: 5, deleted: 5, objectsRemoved: 3, keptInUse: 0, keptStoreFailed: 0 });
    expect(logged).toEqual([]);
  });
});

describe("sweeping while the file store is down", () => {
  it("keeps every abandoned upload, logs one line naming the store, and deletes them on the next sweep once the store is back", async () => {
    const withFile = await issue();
    await put(withFile);
    await age(withFile.uploadId, 30);
    const noFile = await issue();
    await age(noFile.uploadId, 30);

    await store.stop();
    const logged: string[] = [];
    const during = await sweepAbandonedUploads({ log: (line) => logged.push(line) });
    expect(during).toEqual({ examined: 2, deleted: 0, objectsRemoved: 0, keptInUse: 0, keptStoreFailed: 2 });
    expect(await uploadState(withFile.uploadId)).toBe("pending");
    expect(await uploadState(noFile.uploadId)).toBe("pending");
    expect(logged).toHaveLength(1);
    expect(logged[0]).toMatch(
      new RegExp(`^uploads sweep: kept 2 abandoned upload\\(s\\) because the file store \\(S3 bucket "${BUCKET}" at http://127\\.0\\.0\\.1:${store.port}\\) is unavailable; the next sweep tries them again\\. First failure: S3 HEAD s3://${BUCKET}/\\S+ .*ECONNREFUSED`),
    );

    await store.start();
    expect(await storedFile(withFile.s3Key)).toBe("present");
    const after = await sweepAbandonedUploads({ log: (line) => logged.push(line) });
    expect(after).toEqual({ examined: 2, deleted: 2, objectsRemoved: 1, keptInUse: 0, keptStoreFailed: 0 });
    expect(await uploadState(withFile.uploadId)).toBe("gone");
    expect(await uploadState(noFile.uploadId)).toBe("gone");
    expect(await storedFile(withFile.s3Key)).toBe("absent");
    expect(logged).toHaveLength(1);
  });
});

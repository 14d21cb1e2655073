// Set before anything reads the configuration (env() caches its first answer): a 1 MB quota per workspace.
const savedQuota = process.env.WORKSPACE_STORAGE_QUOTA_MB;
process.env.WORKSPACE_STORAGE_QUOTA_MB = "1";

import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { requireMember } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { createBoundaryVersion, createUpload, createUploadSchema } from "@/lib/intake/service";
import { workspaceStorageUsed } from "@/lib/intake/storage-quota";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, ctx, gridGeoJson, jsonRequest } from "@/tests/integration/intake/fixtures";
import { uploadThroughRoutes } from "@/tests/integration/security/fixtures-intake";

// The per-workspace storage quota through the upload route, with
// WORKSPACE_STORAGE_QUOTA_MB=1 in this test process, against the suite's
// PostgreSQL and S3. Declared sizes are enough for pending uploads: the quota
// is checked before any byte moves.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

const KB = 1024;
let slug: string;
let workspaceId: number;
let workspaceName: string;
let fileCount = 0;

/** A ticket request for a panel of `size` declared bytes with a checksum of its own. */
function ticketBody(size: number) {
  fileCount += 1;
  return createUploadSchema.parse({ kind: "panel", fileName: `quota-${fileCount}.csv`, size, sha256: fileCount.toString(16).padStart(64, "0") });
}

async function ask(size: number, where = slug): Promise<{ status: number; body: Record<string, unknown> }> {
  const response = await postUpload(jsonRequest("POST", ticketBody(size)), ctx({ slug: where }));
  return { status: response.status, body: (await response.json()) as Record<string, unknown> };
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  workspaceName = made.workspace.name;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
});
afterAll(async () => {
  if (savedQuota === undefined) delete process.env.WORKSPACE_STORAGE_QUOTA_MB;
  else process.env.WORKSPACE_STORAGE_QUOTA_MB = savedQuota;
  await closeConnections();
});

describe("a workspace's storage quota (WORKSPACE_STORAGE_QUOTA_MB=1)", () => {
  let pendingId: string;

  it("counts a pending upload's declared size, and refuses the upload that would pass 1 MB with a 413 naming used and allowed space and what to do", async () => {
    const first = await ask(600 * KB);
    expect(first.status).toBe(201);
    pendingId = String(first.body.uploadId);
    expect(await workspaceStorageUsed(workspaceId)).toBe(600 * KB);

    const refused = await ask(500 * KB);
    expect(refused.status).toBe(413);
    expect(refused.body).toEqual({
      error:
        `Workspace '${workspaceName}' uses 0.6 MB of its 1 MB of file storage, so this 0.5 MB file does not fit. ` +
        "Failed and unused uploads are removed 24 hours after they were started; to make room sooner, ask the operator to raise WORKSPACE_STORAGE_QUOTA_MB.",
      field: "size",
      usedBytes: 600 * KB,
      quotaBytes: 1024 * KB,
    });
    // Nothing was recorded for the refused upload.
    expect(await workspaceStorageUsed(workspaceId)).toBe(600 * KB);
  });

  it("accepts an upload that fills the quota exactly", async () => {
    const exact = await ask(424 * KB);
    expect(exact.status).toBe(201);
    expect(await workspaceStorageUsed(workspaceId)).toBe(1024 * KB);
    expect((await ask(1)).status).toBe(413);
  });

  it("a failed upload holds no file and stops counting", async () => {
    // Completed before any byte arrived: failed.
    const completed = await postComplete(jsonRequest("POST"), ctx({ slug, uploadId: pendingId }));
    expect(((await completed.json()) as { state: string }).state).toBe("failed");
    expect(await workspaceStorageUsed(workspaceId)).toBe(424 * KB);
    expect((await ask(600 * KB)).status).toBe(201);
  });

  it("is per workspace: another workspace's uploads are not counted", async () => {
    const other = await makeWorkspace({ steward: "steward" });
    sessionMock.mockResolvedValue(asSession(other.users.steward));
    expect((await ask(1000 * KB, other.workspace.slug)).status).toBe(201);
    expect(await workspaceStorageUsed(other.workspace.id)).toBe(1000 * KB);
    expect(await workspaceStorageUsed(workspaceId)).toBe(1024 * KB);
  });

  it("counts a received upload and its version's own copy, each at the file's size", async () => {
    const fresh = await makeWorkspace({ steward: "steward" });
    sessionMock.mockResolvedValue(asSession(fresh.users.steward));
    const geo = gridGeoJson(3, "Q");
    const uploadId = await uploadThroughRoutes(fresh.workspace.slug, "boundaries", "grid.geojson", geo);
    const size = Buffer.byteLength(geo);
    expect(await workspaceStorageUsed(fresh.workspace.id)).toBe(size);
    const steward = await requireMember(fresh.workspace.slug, "data.curate");
    await createBoundaryVersion(steward, { uploadId, setName: "Quota grid", objectName: "regions", idProperty: "code" }, { enqueueJob: false });
    expect(await workspaceStorageUsed(fresh.workspace.id)).toBe(2 * size);
  });

  it("uploads started together cannot add up past the quota: of two that each fit alone, one is refused", async () => {
    const fresh = await makeWorkspace({ steward: "steward" });
    sessionMock.mockResolvedValue(asSession(fresh.users.steward));
    const steward = await requireMember(fresh.workspace.slug, "data.curate");
    const outcomes = await Promise.allSettled([createUpload(steward, ticketBody(700 * KB)), createUpload(steward, ticketBody(700 * KB))]);
    expect(outcomes.map((o) => o.status).sort()).toEqual(["fulfilled", "rejected"]);
    const refused = outcomes.find((o): o is PromiseRejectedResult => o.status === "rejected");
    expect(String((refused?.reason as Error).message)).toMatch(/^Workspace '.*' uses 0\.7 MB of its 1 MB of file storage, so this 0\.7 MB file does not fit\./);
    expect(await workspaceStorageUsed(fresh.workspace.id)).toBe(700 * KB);
  });

  it("takes the limit as a parameter too, over the configured one", async () => {
    const fresh = await makeWorkspace({ steward: "steward" });
    sessionMock.mockResolvedValue(asSession(fresh.users.steward));
    const steward = await requireMember(fresh.workspace.slug, "data.curate");
    await expect(createUpload(steward, ticketBody(2 * 1024 * KB), { quotaMb: 3 })).resolves.toMatchObject({ contentType: "text/csv" });
    await expect(createUpload(steward, ticketBody(2 * 1024 * KB), { quotaMb: 3 })).rejects.toThrow(/uses 2 MB of its 3 MB of file storage/);
  });
});

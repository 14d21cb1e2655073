import { QueryTypes } from "sequelize";
import { requireMember, type MemberContext } from "@/lib/auth/guard";
import { getSessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { createUpload } from "@/lib/intake/service";
import { getBoss, jobsSchema } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { QUEUE_SCHEDULES } from "@/lib/jobs/queues";
import { headObject } from "@/lib/storage/s3";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { asSession, gridGeoJson, sha256 } from "@/tests/integration/intake/fixtures";

// The uploads-sweep queue end to end: enqueued here, run by the worker that
// `npm test` (or `npm run services:test`) starts, against the suite's
// PostgreSQL and s3rver. The sweep's cases are in abandoned-uploads.test.ts.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

let workspaceId: number;
let steward: MemberContext;

/** A ticket for a boundaries file of its own; `sendFile` PUTs it as the browser would. */
async function ticketAgedHours(label: string, hours: number, sendFile: boolean): Promise<{ uploadId: string; s3Key: string }> {
  const bytes = Buffer.from(gridGeoJson(2, `J${label}${Date.now().toString(36)}x`), "utf8");
  const ticket = await createUpload(steward, { kind: "boundaries", fileName: `${label}.geojson`, size: bytes.length, sha256: sha256(bytes) });
  if (sendFile) {
    const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
    expect(response.status).toBe(200);
  }
  const [row] = await db().query<{ s3_key: string }>(
    "UPDATE uploads SET created_at = now() - make_interval(hours => $2), expires_at = now() - make_interval(hours => $2) + interval '1 hour' WHERE id = $1 RETURNING s3_key",
    { bind: [ticket.uploadId, hours], type: QueryTypes.SELECT },
  );
  return { uploadId: ticket.uploadId, s3Key: row.s3_key };
}

async function uploadExists(uploadId: string): Promise<boolean> {
  const rows = await db().query("SELECT 1 FROM uploads WHERE id = $1", { bind: [uploadId], type: QueryTypes.SELECT });
  return rows.length === 1;
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  workspaceId = made.workspace.id;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
  steward = await requireMember(made.workspace.slug, "data.curate");
});

afterAll(async () => {
  if (workspaceId) await db().query("DELETE FROM workspaces WHERE id = $1", { bind: [workspaceId] });
  await closeConnections();
});

describe("the uploads-sweep job", () => {
  it("is scheduled daily by the worker", async () => {
    expect(QUEUE_SCHEDULES).toContainEqual({ queue: "uploads-sweep", cron: "30 3 * * *", data: {} });
    // The worker registers QUEUE_SCHEDULES when it starts.
    const rows = await db().query<{ cron: string; timezone: string }>(`SELECT cron, timezone FROM ${jobsSchema()}.schedule WHERE name = 'uploads-sweep'`, { type: QueryTypes.SELECT });
    expect(rows).toEqual([{ cron: "30 3 * * *", timezone: "UTC" }]);
  });

  it("enqueued, is run by the worker: an abandoned upload and its stored file are deleted, a recent one is kept", async () => {
    const abandoned = await ticketAgedHours("abandoned", 26, true);
    const recent = await ticketAgedHours("recent", 2, true);
    expect(await headObject(abandoned.s3Key)).not.toBeNull();

    const id = await enqueue("uploads-sweep", {});
    expect(id).toEqual(expect.any(String));
    const boss = await getBoss();
    const state = await waitFor(
      `uploads-sweep job ${id} to finish`,
      async () => {
        const job = await boss.getJobById("uploads-sweep", id as string, { includeArchive: true });
        return job && ["completed", "failed"].includes(job.state) ? job.state : null;
      },
      { timeoutMs: 30_000 },
    );
    expect(state).toBe("completed");

    expect(await uploadExists(abandoned.uploadId)).toBe(false);
    expect(await headObject(abandoned.s3Key)).toBeNull();
    expect(await uploadExists(recent.uploadId)).toBe(true);
    expect(await headObject(recent.s3Key)).not.toBeNull();
  });
});

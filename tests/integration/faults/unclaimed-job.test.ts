import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { getBoss } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { startWorkerProcess, type WorkerProcess } from "@/scripts/bench/worker-processes";
import { requireTestServices, uniqueAddress } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitForMailTo } from "@/tests/helpers/mail";
import { waitFor } from "@/tests/helpers/wait";
import { ownJobsSchema } from "./worker-run-checks";

// Issue 7, faults: a worker killed in the instant between pg-boss handing it a
// job and the worker recording its claim. Nothing names the job's owner, so
// the dead-worker hand-back cannot see it; before, only pg-boss's expiry (up
// to 30 minutes for a run piece) brought it back. The test takes jobs from
// pg-boss itself, as that worker would have, and never claims them.

jest.setTimeout(300_000);

const SCHEMA = "pgboss_unclaimed";
// An active job unclaimed for longer than the lease is handed back. The lease
// is longer than a worker takes to start, so the test can claim its second job
// for the live worker before either job is old enough to be swept.
const LEASE_SECONDS = 30;
const WORKER_ENV = { JOBS_SCHEMA: SCHEMA, WORKER_CONCURRENCY: "1", WORKER_POLL_SECONDS: "0.5", WORKER_HEARTBEAT_SECONDS: "0.5", WORKER_LEASE_SECONDS: String(LEASE_SECONDS) };

let teardown: ((workers: WorkerProcess[]) => Promise<void>) | undefined;
const workers: WorkerProcess[] = [];

beforeAll(async () => {
  await requireTestServices();
  teardown = await ownJobsSchema(SCHEMA);
});
afterAll(async () => {
  await teardown?.(workers);
  await closeConnections();
});

describe("a job taken by a worker that died before claiming it", () => {
  it("is handed back after one lease and delivered once, while a job claimed by a live worker is left alone", async () => {
    const boss = await getBoss();
    const lost = uniqueAddress("unclaimed");
    const held = uniqueAddress("claimed");
    const since = new Date();
    const lostJob = await enqueue("mail-test", { to: lost, subject: "Unclaimed job check" });
    const heldJob = await enqueue("mail-test", { to: held, subject: "Claimed job check" });
    expect(lostJob).not.toBeNull();
    expect(heldJob).not.toBeNull();
    // Taken from the queue and never claimed: what a worker killed right after the fetch leaves behind.
    const taken = await boss.fetch("mail-test", { batchSize: 2 });
    expect(new Set(taken.map((j) => j.id))).toEqual(new Set([lostJob, heldJob]));

    const worker = await startWorkerProcess("unclaimed-a", WORKER_ENV);
    workers.push(worker);
    // The second job is claimed by the live worker, as if it were running it.
    const [me] = await db().query<{ id: number }>("SELECT id FROM job_workers WHERE jobs_schema = $1 AND label = 'unclaimed-a' AND stopped_at IS NULL", {
      bind: [SCHEMA],
      type: QueryTypes.SELECT,
    });
    await db().query("INSERT INTO job_claims (job_id, queue, worker_id, claimed_at) VALUES ($1, 'mail-test', $2, now())", { bind: [heldJob, me.id] });
    const [age] = await db().query<{ seconds: number }>(`SELECT EXTRACT(EPOCH FROM now() - started_on)::float8 AS seconds FROM ${SCHEMA}.job WHERE id = $1`, {
      bind: [heldJob],
      type: QueryTypes.SELECT,
    });
    if (age.seconds >= LEASE_SECONDS) throw new Error(`the worker took ${age.seconds.toFixed(1)} s to start, longer than the ${LEASE_SECONDS} s lease this test relies on`);

    const mail = await waitForMailTo(lost, { since, subjectContains: "Unclaimed job check", timeoutMs: (LEASE_SECONDS + 60) * 1000 });
    expect(mail.subject).toBe("Unclaimed job check");
    const handBacks = worker.lines.filter((l) => l.includes("active and unclaimed for"));
    expect(handBacks).toHaveLength(1);
    expect(handBacks[0]).toContain(`handed mail-test ${lostJob}`);
    expect(handBacks[0]).toContain("back to the queue for a retry");

    // Both jobs were taken at the same moment, so the sweep that handed the first back saw the second too, and kept off it.
    expect((await boss.getJobById("mail-test", heldJob!, { includeArchive: true }))?.state).toBe("active");
    const lostState = await waitFor("the handed-back job to complete", async () => {
      const state = (await boss.getJobById("mail-test", lostJob!, { includeArchive: true }))?.state;
      return state === "completed" ? state : null;
    });
    expect(lostState).toBe("completed");
    const delivered = await db().query<{ n: string }>('SELECT count(*)::text AS n FROM outbox_messages WHERE $1 = ANY("to") AND received_at >= $2', {
      bind: [lost, since],
      type: QueryTypes.SELECT,
    });
    expect(Number(delivered[0].n)).toBe(1);
  });
});

import { randomBytes } from "node:crypto";
import type PgBoss from "pg-boss";
import { QueryTypes } from "sequelize";
import { env } from "@/lib/config/env";
import { db } from "@/lib/db";
import { deliverDigest, digestJobsForCadence, digestMessageId, saveSubscription } from "@/lib/digests/service";
import type { DigestSendPayload } from "@/lib/jobs/payloads";
import { getBoss } from "@/lib/jobs/boss";
import { DEFAULT_QUEUE_SETTINGS, queueSchemas, queueSettings } from "@/lib/jobs/queues";
import { sendMail } from "@/lib/mail/send";
import { requireTestServices } from "@/tests/helpers/env";
import { freePort, smtpSinkProcess, type ServiceProcess } from "@/tests/helpers/service-process";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";

// SMTP unavailable while digests go out. Mail leaves through a second SMTP
// sink that this file starts and stops on a port of its own (SMTP_PORT is set
// before anything reads the configuration); it stores what it accepts in the
// same outbox_messages table as the suite's sink. The digest-send jobs run on
// real pg-boss with the digest-send queue's production retry settings, in a
// queue of this file's own, worked here by the function the worker's
// digest-send handler calls (the suite's worker would otherwise take them and
// send through the suite's sink, which is up).

jest.setTimeout(240_000);

const QUEUE = `digest-send-fault-${randomBytes(4).toString("hex")}`;
let sink: ServiceProcess;
let boss: PgBoss;
let workspaceId: number;
let recipients: string[];
let payloads: DigestSendPayload[];

type JobRow = { id: string; state: string; key: string; start_after: Date; completed_on: Date | null; output: { message?: string } | null };

async function jobs(): Promise<JobRow[]> {
  return db().query<JobRow>(
    "SELECT id, state, data->>'idempotencyKey' AS key, start_after, completed_on, output FROM pgboss.job WHERE name = $1 ORDER BY created_on, id",
    { bind: [QUEUE], type: QueryTypes.SELECT },
  );
}

type DeliveryRow = { idempotency_key: string; status: string; attempts: number; error: string | null; message_id: string | null };

async function deliveries(keys: string[]): Promise<DeliveryRow[]> {
  return db().query<DeliveryRow>(
    "SELECT idempotency_key, status, attempts, error, message_id FROM digest_deliveries WHERE idempotency_key = ANY($1) ORDER BY idempotency_key",
    { bind: [keys], type: QueryTypes.SELECT },
  );
}

/** Every digest mail captured for `keys` (by either sink), as [recipient, key, Message-ID]. */
async function captured(keys: string[]): Promise<{ to: string; key: string; messageId: string }[]> {
  const rows = await db().query<{ to: string[]; key: string; message_id: string }>(
    `SELECT "to", headers->>'x-tessera-digest' AS key, message_id FROM outbox_messages WHERE headers->>'x-tessera-digest' = ANY($1) ORDER BY id`,
    { bind: [keys], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ to: r.to.join(","), key: r.key, messageId: r.message_id }));
}

const keysOf = (list: DigestSendPayload[]) => list.map((p) => p.idempotencyKey);

/** Each payload twice: a scheduler that runs again (a retried weekly job) must not double anything. */
async function schedule(list: DigestSendPayload[]): Promise<void> {
  for (const payload of [...list, ...list]) await boss.send(QUEUE, payload);
}

beforeAll(async () => {
  const services = await requireTestServices();
  sink = smtpSinkProcess({ port: await freePort(), databaseUrl: services.databaseUrl });
  process.env.SMTP_PORT = String(sink.port);
  if (env().SMTP_PORT !== sink.port) throw new Error(`the configuration was read before the test pointed SMTP_PORT at its own sink (${env().SMTP_PORT})`);

  const made = await makeWorkspace({ boss: "manager", analyst: "economist", reader: "subscriber" });
  workspaceId = made.workspace.id;
  recipients = Object.values(made.users).map((u) => u.email.toLowerCase());
  for (const user of Object.values(made.users)) {
    await saveSubscription(workspaceId, user.id, { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so", active: true });
  }
  payloads = await digestJobsForCadence("weekly", new Date(), workspaceId);

  boss = await getBoss();
  await boss.createQueue(QUEUE, { name: QUEUE, ...DEFAULT_QUEUE_SETTINGS, ...queueSettings["digest-send"] });
  // Two subscriptions, like a worker with WORKER_CONCURRENCY=2: the duplicate jobs of one key really run side by side.
  for (let i = 0; i < 2; i++) {
    await boss.work(QUEUE, { batchSize: 1, pollingIntervalSeconds: 0.5 }, async ([job]) => {
      await deliverDigest(queueSchemas["digest-send"].parse(job.data));
    });
  }
});

afterAll(async () => {
  await boss?.offWork(QUEUE).catch(() => undefined);
  await boss?.deleteQueue(QUEUE).catch(() => undefined);
  await sink?.stop().catch(() => undefined);
  await closeConnections();
});

describe("SMTP unavailable during a digest", () => {
  it("with the SMTP server down, each digest fails, the failure is recorded, and pg-boss schedules a retry with backoff", async () => {
    expect(payloads).toHaveLength(3);
    const before = Date.now();
    await schedule(payloads);

    const retrying = await waitFor(
      "all six digest jobs to fail once and wait for a retry",
      async () => {
        const rows = await jobs();
        return rows.length === 6 && rows.every((j) => j.state === "retry") ? rows : null;
      },
      { timeoutMs: 60_000, intervalMs: 250 },
    );
    for (const job of retrying) {
      expect(job.output?.message).toMatch(new RegExp(`SMTP 127\\.0\\.0\\.1:${sink.port} did not accept .*ECONNREFUSED`));
      // Backoff from the queue's settings (retryDelay 10 s, doubled per attempt, with jitter): not before 10 s after the failure.
      expect(new Date(job.start_after).getTime() - new Date(job.completed_on ?? before).getTime()).toBeGreaterThanOrEqual(9_000);
    }
    const rows = await deliveries(keysOf(payloads));
    expect(rows).toHaveLength(3);
    for (const row of rows) {
      expect(row.status).toBe("failed");
      expect(row.message_id).toBeNull();
      expect(row.error).toMatch(new RegExp(`^Attempt \\d failed: sendMail: SMTP 127\\.0\\.0\\.1:${sink.port} did not accept .*ECONNREFUSED`));
    }
    expect(await captured(keysOf(payloads))).toEqual([]);
  });

  it("once SMTP is back, the retries deliver each subscriber's digest exactly once", async () => {
    await sink.start();
    await waitFor(
      "every digest job to complete after SMTP came back",
      async () => {
        const rows = await jobs();
        return rows.length === 6 && rows.every((j) => j.state === "completed");
      },
      { timeoutMs: 150_000, intervalMs: 500 },
    );
    const mails = await captured(keysOf(payloads));
    expect(mails.map((m) => m.to).sort()).toEqual([...recipients].sort());
    for (const payload of payloads) {
      const mine = mails.filter((m) => m.key === payload.idempotencyKey);
      expect(mine).toEqual([expect.objectContaining({ messageId: digestMessageId(payload.idempotencyKey) })]);
    }
    const rows = await deliveries(keysOf(payloads));
    expect(rows.map((r) => r.status)).toEqual(["sent", "sent", "sent"]);
    for (const row of rows) {
      expect(row.attempts).toBeGreaterThanOrEqual(2);
      expect(row.message_id).toBe(digestMessageId(row.idempotency_key));
      expect(row.error).toBeNull();
    }
  });

  it("scheduling the same week again after delivery sends nothing more", async () => {
    const attemptsBefore = (await deliveries(keysOf(payloads))).map((r) => r.attempts);
    await schedule(await digestJobsForCadence("weekly", new Date(), workspaceId));
    await waitFor("the repeated jobs to complete", async () => {
      const rows = await jobs();
      return rows.length === 12 && rows.every((j) => j.state === "completed");
    }, { timeoutMs: 60_000, intervalMs: 250 });
    expect(await captured(keysOf(payloads))).toHaveLength(3);
    expect((await deliveries(keysOf(payloads))).map((r) => r.attempts)).toEqual(attemptsBefore);
  });

  it("the window left: a mail SMTP accepted whose record was lost is sent again on retry, under the same Message-ID", async () => {
    const [first] = payloads;
    const payload = { ...first, idempotencyKey: `${first.subscriptionId}:lost-record-${Date.now()}`, coverage: "lost-record check" };
    // The server accepts, then the attempt dies before its "sent" record is committed.
    const acceptedThenLost = async (mail: Parameters<typeof sendMail>[0]) => {
      await sendMail(mail);
      throw new Error("the worker died after the SMTP server accepted the mail");
    };
    await expect(deliverDigest(payload, { send: acceptedThenLost })).rejects.toThrow(/worker died/);
    expect(await deliverDigest(payload)).toBe("sent");
    expect(await deliverDigest(payload)).toBe("duplicate");
    const copies = await captured([payload.idempotencyKey]);
    expect(copies).toHaveLength(2);
    expect(new Set(copies.map((c) => c.messageId))).toEqual(new Set([digestMessageId(payload.idempotencyKey)]));
  });
});

import { QueryTypes } from "sequelize";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { GET as getOwn, PUT as putOwn } from "@/app/api/w/[slug]/digests/route";
import { GET as getPreview } from "@/app/api/w/[slug]/digests/preview/route";
import { POST as postSendNow } from "@/app/api/w/[slug]/digests/send-now/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import type { DigestPreviewAnswer, SendNowAnswer } from "@/lib/digests/answers";
import type { DeliveryView } from "@/lib/digests/queries";
import { runLabelOf } from "./run-label-of";
import { digestJobsForCadence } from "@/lib/digests/service";
import { enqueue } from "@/lib/jobs/enqueue";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "@/tests/integration/runs/fixtures";

// No silent skips: the preview is what "send now" sends (compared byte for
// byte with the mail the SMTP sink captured), "send now" that sends nothing
// answers why, and a scheduled digest that is skipped records its reason,
// which the Digests API answers. Real services and the test worker; only the
// next-auth session is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let panel: LoadedPanel;
let runId: number;

function signedInAs(user: { id: number; email: string; name: string }) {
  sessionMock.mockResolvedValue({ id: user.id, email: user.email, name: user.name } satisfies SessionUser);
}
const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const json = (method: string, body: unknown) => new Request("http://tessera.test/api", { method, headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
const get = () => new Request("http://tessera.test/api");

async function preview(): Promise<DigestPreviewAnswer> {
  signedInAs(users.reader);
  const response = await getPreview(get(), ctx({ slug }));
  expect(response.status).toBe(200);
  return (await response.json()) as DigestPreviewAnswer;
}

async function sendNow(): Promise<{ status: number; answer: SendNowAnswer }> {
  signedInAs(users.reader);
  const response = await postSendNow(json("POST", {}), ctx({ slug }));
  return { status: response.status, answer: (await response.json()) as SendNowAnswer };
}

async function history(): Promise<DeliveryView[]> {
  signedInAs(users.reader);
  const response = await getOwn(get(), ctx({ slug }));
  expect(response.status).toBe(200);
  return ((await response.json()) as { deliveries: DeliveryView[] }).deliveries;
}

async function settled(idempotencyKey: string): Promise<DeliveryView> {
  return waitFor(`delivery ${idempotencyKey} to be sent, skipped or failed (is the test worker running?)`, async () => {
    const row = (await history()).find((d) => d.idempotencyKey === idempotencyKey);
    return row && row.status !== "queued" && row.status !== "sending" ? row : null;
  }, { timeoutMs: 90_000, intervalMs: 500 });
}

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ analyst: "economist", reader: "subscriber" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate"], periods: ["2012", "2013", "2014"] });
  signedInAs(users.reader);
  const saved = await putOwn(json("PUT", { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "skip" }), ctx({ slug }));
  expect(saved.status).toBe(200);
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("send now with nothing to send", () => {
  it("the preview and the answer say why, and the skip is recorded with that reason", async () => {
    const reason = "There is no completed run in this workspace yet, and you chose to receive nothing when nothing changed.";
    expect((await preview()).decision).toEqual({ send: false, reason, sentence: `Nothing would be sent now: ${reason}` });

    const { status, answer } = await sendNow();
    expect(status).toBe(200);
    expect(answer).toMatchObject({ status: "skipped", sentence: `Nothing was sent: ${reason}` });
    expect(await history()).toEqual([expect.objectContaining({ idempotencyKey: answer.idempotencyKey, status: "skipped", skippedReason: reason, error: null, sentAt: null })]);
    const [mails] = await db().query<{ n: string }>(`SELECT count(*) AS n FROM outbox_messages WHERE $1 = ANY("to")`, { bind: [users.reader.email.toLowerCase()], type: QueryTypes.SELECT });
    expect(Number(mails.n)).toBe(0);
  });
});

describe("the preview is what is sent", () => {
  it("send now sends exactly the previewed subject, text and HTML to the previewed address", async () => {
    signedInAs(users.analyst);
    const response = await postRun(json("POST", { panelVersionId: panel.panelVersionId, seed: 4242, permutations: 199 }), ctx({ slug }));
    expect(response.status).toBe(201);
    runId = ((await response.json()) as { runId: number }).runId;
    await waitFor(`run ${runId} to complete`, async () => {
      const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
      return row?.state === "completed" ? true : null;
    }, { timeoutMs: 200_000, intervalMs: 500 });

    const shown = await preview();
    expect(shown.decision).toEqual({ send: true, to: users.reader.email, sentence: `Sending now would send this digest to ${users.reader.email}.` });
    expect(shown).toMatchObject({ runId, empty: false, baseline: { kind: "first" } });

    const { status, answer } = await sendNow();
    expect(status).toBe(202);
    expect(answer.status).toBe("queued");
    expect(answer.sentence).toBe(`On its way to ${users.reader.email}: “${shown.subject}”. The history below shows when it is sent.`);
    const row = await settled(answer.idempotencyKey);
    expect(row).toMatchObject({ status: "sent", coveredRunId: runId, skippedReason: null });

    const [mail] = await db().query<{ subject: string; text: string; html: string }>(
      `SELECT subject, text, html FROM outbox_messages WHERE message_id = $1`,
      { bind: [row.messageId], type: QueryTypes.SELECT },
    );
    expect(mail.subject).toBe(shown.subject);
    // Equal but for the unsubscribe token, which is signed with its expiry at each rendering
    // (a different second gives another token) — and the sink stores parsed bodies, where
    // a transfer encoding may add or drop one final line break.
    const same = (body: string | null | undefined) => (body ?? "").replace(/token=[A-Za-z0-9_.%-]+/g, "token=…").trimEnd();
    expect(same(mail.text)).toBe(same(shown.text));
    expect(same(mail.html)).toBe(same(shown.html));
    expect(same(shown.text)).toContain("Unsubscribe: http");
    expect(same(mail.text)).toContain(`Method of ${(await runLabelOf(runId)).label}: weights queen`);
  });

  it("asked again with nothing new: the answer gives the reason, and the preview said the same beforehand", async () => {
    const reason = `Your previous digest already reported ${(await runLabelOf(runId)).label}, so nothing is new, and you chose to receive nothing when nothing changed.`;
    const shown = await preview();
    expect(shown.decision).toEqual({ send: false, reason, sentence: `Nothing would be sent now: ${reason}` });
    expect(shown.baseline).toEqual({ kind: "previous-digest", runId });

    const { status, answer } = await sendNow();
    expect(status).toBe(200);
    expect(answer).toEqual({ status: "skipped", sentence: `Nothing was sent: ${reason}`, idempotencyKey: expect.stringMatching(/:manual-/) });
    expect((await history()).find((d) => d.idempotencyKey === answer.idempotencyKey)).toMatchObject({ status: "skipped", skippedReason: reason });
  });
});

describe("a scheduled digest that is skipped", () => {
  it("records its reason, and the Digests API answers it", async () => {
    const payloads = await digestJobsForCadence("weekly", new Date(), workspaceId);
    expect(payloads).toHaveLength(1);
    // Through the queue and the test worker, as the Monday schedule does.
    await enqueue("digest-send", payloads[0]);
    const row = await settled(payloads[0].idempotencyKey);
    expect(row).toMatchObject({
      status: "skipped",
      error: null,
      coveredRunId: runId,
      skippedReason: `Your previous digest already reported ${(await runLabelOf(runId)).label}, so nothing is new, and you chose to receive nothing when nothing changed.`,
    });
    // Skipped digests report nothing: the last digest is still the one sent.
    const sent = (await history()).filter((d) => d.status === "sent");
    expect(sent).toHaveLength(1);
  });
});

import net from "node:net";
import nodemailer from "nodemailer";
import { QueryTypes } from "sequelize";
import { POST as postRun } from "@/app/api/w/[slug]/runs/route";
import { POST as postRerun } from "@/app/api/w/[slug]/runs/[runId]/rerun/route";
import { GET as getOwn, PUT as putOwn } from "@/app/api/w/[slug]/digests/route";
import { GET as getPreview } from "@/app/api/w/[slug]/digests/preview/route";
import { GET as getSubscribers } from "@/app/api/w/[slug]/digests/subscribers/route";
import { GET as getUnsubscribe, POST as postUnsubscribe } from "@/app/api/digests/unsubscribe/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { getOwnSubscription } from "@/lib/digests/queries";
import { runLabelOf } from "./run-label-of";
import { deliverDigest, type MailSender } from "@/lib/digests/service";
import { signUnsubscribeToken } from "@/lib/digests/token";
import { enqueue } from "@/lib/jobs/enqueue";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { CapturedMail } from "@/lib/mail/outbox";
import { models } from "@/lib/models";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { waitFor } from "@/tests/helpers/wait";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel, type LoadedPanel } from "@/tests/integration/runs/fixtures";

// Against the real services: PostgreSQL, the SMTP sink (outbox_messages) and
// the test bring-up's worker, which works the run pieces, the run-completed
// hook and the digest-send jobs. Only the next-auth session is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(240_000);

type Users = Awaited<ReturnType<typeof makeWorkspace>>["users"];
let slug: string;
let workspaceId: number;
let users: Users;
let panel: LoadedPanel;
let firstRun: number;
const started = new Date();

function signedInAs(user: { id: number; email: string; name: string } | null) {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}
const ctx = (params: Record<string, string>) => ({ params: Promise.resolve(params) });
const json = (method: string, body: unknown) => new Request("http://tessera.test/api", { method, headers: { "content-type": "application/json" }, body: JSON.stringify(body) });

async function subscribe(user: { id: number; email: string; name: string }, body: Record<string, unknown>) {
  signedInAs(user);
  const response = await putOwn(json("PUT", { cadence: "after_run", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "skip", ...body }), ctx({ slug }));
  expect(response.status).toBe(200);
  const sub = await getOwnSubscription(workspaceId, user.id);
  if (!sub) throw new Error(`no subscription stored for ${user.email}`);
  return sub;
}

async function waitForRun(runId: number): Promise<string> {
  return waitFor(
    `run ${runId} to finish (is the test worker running?)`,
    async () => {
      const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
      return row && ["completed", "failed", "cancelled"].includes(row.state) ? row.state : null;
    },
    { timeoutMs: 200_000, intervalMs: 500 },
  );
}

async function deliveries(subscriptionId: number) {
  return db().query<{ idempotency_key: string; status: string; attempts: number; error: string | null; skipped_reason: string | null; message_id: string | null; run_id: number | null }>(
    "SELECT idempotency_key, status, attempts, error, skipped_reason, message_id, run_id FROM digest_deliveries WHERE subscription_id = $1 ORDER BY id",
    { bind: [subscriptionId], type: QueryTypes.SELECT },
  );
}

async function mailsTo(address: string, since = started): Promise<CapturedMail[]> {
  const rows = await db().query<{ id: number; message_id: string; subject: string; text: string; html: string; headers: Record<string, string> }>(
    `SELECT id, message_id, subject, text, html, headers FROM outbox_messages WHERE $1 = ANY("to") AND received_at >= $2 ORDER BY id`,
    { bind: [address.toLowerCase(), since.toISOString()], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ id: Number(r.id), messageId: r.message_id, from: "", to: [address], subject: r.subject, text: r.text, html: r.html, headers: r.headers, receivedAt: new Date() }));
}

function header(mail: CapturedMail, name: string): string {
  const value = mail.headers[name.toLowerCase()];
  return (Array.isArray(value) ? value.join(" ") : (value ?? "")).replace(/\s+/g, "");
}

const UNEMPLOYMENT = "Unemployment rate";
const BROADBAND = "Broadband coverage";

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ boss: "manager", analyst: "economist", reader: "subscriber", leaver: "subscriber" });
  users = made.users;
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate", "broadband_coverage"], periods: ["2012", "2013", "2014"] });
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("subscriptions", () => {
  it("a member saves their own subscription; a bad body names the field", async () => {
    signedInAs(users.reader);
    const bad = await putOwn(json("PUT", { cadence: "hourly", scope: "all", threshold: "every_change", emptyPolicy: "skip" }), ctx({ slug }));
    expect(bad.status).toBe(400);
    expect(await bad.json()).toMatchObject({ field: "cadence" });
    const none = await putOwn(json("PUT", { cadence: "weekly", scope: "chosen", indicatorCodes: [], threshold: "every_change", emptyPolicy: "skip" }), ctx({ slug }));
    expect(none.status).toBe(400);
    expect(await none.json()).toMatchObject({ field: "indicatorCodes" });

    const reader = await subscribe(users.reader, {});
    expect(reader).toMatchObject({ cadence: "after_run", scope: "all", active: true });
    await subscribe(users.analyst, { scope: "chosen", indicatorCodes: ["broadband_coverage"], emptyPolicy: "say_so" });
    await subscribe(users.boss, { emptyPolicy: "skip" });
    await subscribe(users.leaver, {});
    const own = await getOwn(new Request("http://tessera.test/api"), ctx({ slug }));
    expect(((await own.json()) as { subscription: { userId: number } }).subscription.userId).toBe(users.leaver.id);
  });

  it("only managers see who subscribes to what", async () => {
    signedInAs(users.reader);
    expect((await getSubscribers(new Request("http://tessera.test/api"), ctx({ slug }))).status).toBe(403);
    signedInAs(users.boss);
    const response = await getSubscribers(new Request("http://tessera.test/api"), ctx({ slug }));
    expect(response.status).toBe(200);
    const { subscribers } = (await response.json()) as { subscribers: { email: string; scope: string; indicatorCodes: string[] }[] };
    expect(subscribers.map((s) => s.email).sort()).toEqual([users.analyst.email, users.boss.email, users.leaver.email, users.reader.email].sort());
    expect(subscribers.find((s) => s.email === users.analyst.email)).toMatchObject({ scope: "chosen", indicatorCodes: ["broadband_coverage"] });
  });

  it("a non-member gets 404", async () => {
    const { users: outsiders } = await makeWorkspace({ stranger: "manager" });
    signedInAs(outsiders.stranger);
    expect((await getOwn(new Request("http://tessera.test/api"), ctx({ slug }))).status).toBe(404);
  });
});

describe("a completed run produces digests", () => {
  it("each subscriber in scope receives one digest with their indicators; a removed member gets none", async () => {
    // Removed from the workspace before the run: never scheduled, nothing sent.
    await models().Membership.destroy({ where: { workspaceId, userId: users.leaver.id } });
    signedInAs(users.analyst);
    const response = await postRun(json("POST", { panelVersionId: panel.panelVersionId, seed: 777, permutations: 199 }), ctx({ slug }));
    expect(response.status).toBe(201);
    firstRun = ((await response.json()) as { runId: number }).runId;
    expect(await waitForRun(firstRun)).toBe("completed");

    const readerMail = await waitForMailTo(users.reader.email, { since: started, subjectContains: "Tessera digest", timeoutMs: 60_000 });
    expect(readerMail.subject).toContain(`results of ${(await runLabelOf(firstRun)).name})`);
    // The text names the run as the screens do: number, panel version, weights, permutations.
    expect(readerMail.text).toContain((await runLabelOf(firstRun)).label);
    expect(readerMail.text).toContain(UNEMPLOYMENT);
    expect(readerMail.text).toContain(BROADBAND);
    expect(readerMail.text).toContain("Significance is not causation");
    // Nothing was delivered before: the first digest compares with nothing.
    expect(readerMail.text).toContain("Your first digest of these results: there is no previous digest to compare with");
    expect(readerMail.text).not.toContain("since your previous digest");
    expect(readerMail.text).toContain(`/w/${slug}/timeline?indicator=unemployment_rate&run=${firstRun}`);
    expect(readerMail.html).toContain("<svg");
    expect(header(readerMail, "List-Unsubscribe")).toMatch(/^<http:\/\/[^>]+\/api\/digests\/unsubscribe\?token=[^>]+>$/);
    expect(header(readerMail, "List-Unsubscribe-Post")).toBe("List-Unsubscribe=One-Click");

    const analystMail = await waitForMailTo(users.analyst.email, { since: started, subjectContains: "Tessera digest", timeoutMs: 60_000 });
    expect(analystMail.text).toContain(BROADBAND);
    expect(analystMail.text).not.toContain(UNEMPLOYMENT);

    const readerSub = await getOwnSubscription(workspaceId, users.reader.id);
    const rows = await deliveries(readerSub?.id ?? 0);
    expect(rows).toEqual([expect.objectContaining({ idempotency_key: `sub-${readerSub?.id}:run-${firstRun}`, status: "sent", attempts: 1, run_id: firstRun, message_id: readerMail.messageId })]);
    expect(readerSub?.lastRunId).toBe(firstRun);

    const leaverSub = await getOwnSubscription(workspaceId, users.leaver.id);
    expect(await deliveries(leaverSub?.id ?? 0)).toEqual([]);
    expect(await mailsTo(users.leaver.email)).toEqual([]);
  });

  it("a retried or repeated digest job sends nothing twice", async () => {
    const readerSub = await getOwnSubscription(workspaceId, users.reader.id);
    if (!readerSub) throw new Error("reader subscription missing");
    const key = `sub-${readerSub.id}:run-${firstRun}`;
    const jobId = await enqueue("digest-send", { subscriptionId: readerSub.id, idempotencyKey: key, runId: firstRun, coverage: `results of run ${firstRun}` });
    await waitFor(`job ${jobId} to be worked`, async () => {
      const [job] = await db().query<{ state: string }>("SELECT state FROM pgboss.job WHERE id = $1", { bind: [jobId], type: QueryTypes.SELECT });
      return job?.state === "completed";
    });
    expect(await deliverDigest({ subscriptionId: readerSub.id, idempotencyKey: key, runId: firstRun, coverage: "x" })).toBe("duplicate");
    expect((await mailsTo(users.reader.email)).length).toBe(1);
    expect((await deliveries(readerSub.id)).length).toBe(1);
  });

  it("the preview shows the same digest the member would get", async () => {
    signedInAs(users.analyst);
    const response = await getPreview(new Request("http://tessera.test/api"), ctx({ slug }));
    expect(response.status).toBe(200);
    const preview = (await response.json()) as { subject: string; html: string; empty: boolean; runId: number; baseline: unknown; decision: unknown };
    // Nothing new since the digest of firstRun: the analyst chose "say so", so it would still go out.
    expect(preview).toMatchObject({ runId: firstRun, empty: true, baseline: { kind: "previous-digest", runId: firstRun } });
    expect(preview.decision).toEqual({ send: true, to: users.analyst.email, sentence: `Sending now would send this digest to ${users.analyst.email}.` });
    expect(preview.subject).toContain("nothing changed");
  });
});

describe("a member removed between scheduling and sending", () => {
  it("is skipped and the skip recorded", async () => {
    const leaverSub = await getOwnSubscription(workspaceId, users.leaver.id);
    if (!leaverSub) throw new Error("leaver subscription missing");
    const outcome = await deliverDigest({ subscriptionId: leaverSub.id, idempotencyKey: `sub-${leaverSub.id}:run-${firstRun}`, runId: firstRun, coverage: "late" });
    expect(outcome).toBe("skipped");
    expect(await deliveries(leaverSub.id)).toEqual([expect.objectContaining({ status: "skipped", error: null, skipped_reason: "The subscriber is no longer a member of the workspace." })]);
    expect(await mailsTo(users.leaver.email)).toEqual([]);
  });
});

describe("unsubscribing", () => {
  it("a tampered or expired token changes nothing and says why", async () => {
    const analystSub = await getOwnSubscription(workspaceId, users.analyst.id);
    if (!analystSub) throw new Error("analyst subscription missing");
    const good = signUnsubscribeToken(analystSub.id);
    const tampered = `${Buffer.from(JSON.stringify({ s: analystSub.id, e: 4_102_444_800 })).toString("base64url")}.${good.split(".")[1]}`;
    const forged = await postUnsubscribe(new Request(`http://tessera.test/api/digests/unsubscribe?token=${tampered}`, { method: "POST", body: "List-Unsubscribe=One-Click", headers: { "content-type": "application/x-www-form-urlencoded" } }));
    expect(forged.status).toBe(400);
    expect(await forged.text()).toContain("not one Tessera signed");
    const expired = signUnsubscribeToken(analystSub.id, { now: new Date(Date.now() - 3_600_000), ttlSeconds: 60 });
    const late = await getUnsubscribe(new Request(`http://tessera.test/api/digests/unsubscribe?token=${expired}`));
    expect(late.status).toBe(400);
    expect(await late.text()).toContain("has expired");
    const latePost = await postUnsubscribe(new Request(`http://tessera.test/api/digests/unsubscribe?token=${expired}`, { method: "POST" }));
    expect(latePost.status).toBe(400);
    expect((await getOwnSubscription(workspaceId, users.analyst.id))?.active).toBe(true);
  });

  it("GET only asks; the one-click POST from the mail's header unsubscribes", async () => {
    const mail = (await mailsTo(users.reader.email))[0];
    const url = header(mail, "List-Unsubscribe").slice(1, -1);
    const confirm = await getUnsubscribe(new Request(url));
    expect(confirm.status).toBe(200);
    expect(await confirm.text()).toContain("Stop these digests?");
    expect((await getOwnSubscription(workspaceId, users.reader.id))?.active).toBe(true);
    const done = await postUnsubscribe(new Request(url, { method: "POST", body: "List-Unsubscribe=One-Click", headers: { "content-type": "application/x-www-form-urlencoded" } }));
    expect(done.status).toBe(200);
    expect(await done.text()).toContain("You are unsubscribed");
    const sub = await getOwnSubscription(workspaceId, users.reader.id);
    expect(sub).toMatchObject({ active: false });
    expect(sub?.unsubscribedAt).not.toBeNull();
  });

  it("after a rerun: the unsubscribed member gets nothing, 'say so' gets 'nothing changed', 'skip' is recorded as skipped", async () => {
    signedInAs(users.analyst);
    const response = await postRerun(json("POST", {}), ctx({ slug, runId: String(firstRun) }));
    expect(response.status).toBe(201);
    const rerun = ((await response.json()) as { runId: number }).runId;
    expect(await waitForRun(rerun)).toBe("completed");
    const rerunLabel = await runLabelOf(rerun);

    const nothing = await waitForMailTo(users.analyst.email, { since: started, subjectContains: `nothing changed (results of ${rerunLabel.name})`, timeoutMs: 60_000 });
    expect(nothing.text).toContain("Nothing changed in the indicators you follow");
    const bossSub = await getOwnSubscription(workspaceId, users.boss.id);
    const bossRows = await waitFor("the manager's skipped delivery", async () => {
      const rows = await deliveries(bossSub?.id ?? 0);
      return rows.some((r) => r.run_id === rerun && r.status !== "queued" && r.status !== "sending") ? rows : null;
    });
    expect(bossRows.find((r) => r.run_id === rerun)).toMatchObject({
      status: "skipped",
      error: null,
      skipped_reason: `Nothing changed in the indicators you follow between ${(await runLabelOf(firstRun)).label} (your previous digest) and ${rerunLabel.label}, and you chose to receive nothing when nothing changed.`,
    });
    expect((await mailsTo(users.boss.email)).filter((m) => m.subject.includes(`${rerunLabel.name})`))).toEqual([]);

    const readerSub = await getOwnSubscription(workspaceId, users.reader.id);
    expect((await deliveries(readerSub?.id ?? 0)).filter((r) => r.run_id === rerun)).toEqual([]);
    expect((await mailsTo(users.reader.email)).length).toBe(1);
  });
});

describe("an SMTP server that refuses", () => {
  async function closedPort(): Promise<number> {
    const server = net.createServer();
    await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
    const address = server.address();
    await new Promise<void>((resolve) => server.close(() => resolve()));
    if (!address || typeof address === "string") throw new Error("no port");
    return address.port;
  }

  it("is recorded as failed, retried, and delivers exactly once", async () => {
    const bossSub = await getOwnSubscription(workspaceId, users.boss.id);
    if (!bossSub) throw new Error("manager subscription missing");
    await subscribe(users.boss, { emptyPolicy: "say_so" });
    const port = await closedPort();
    const refusing = nodemailer.createTransport({ host: "127.0.0.1", port, secure: false, ignoreTLS: true, connectionTimeout: 2_000 });
    const send: MailSender = async (mail) => String((await refusing.sendMail({ from: "Tessera <no-reply@tessera.invalid>", ...mail })).messageId);
    const payload = { subscriptionId: bossSub.id, idempotencyKey: `sub-${bossSub.id}:smtp-refusal-test`, runId: firstRun, coverage: "refusal test" };
    const before = (await mailsTo(users.boss.email)).length;

    await expect(deliverDigest(payload, { send })).rejects.toThrow(/ECONNREFUSED/);
    const failed = (await deliveries(bossSub.id)).find((r) => r.idempotency_key === payload.idempotencyKey);
    expect(failed).toMatchObject({ status: "failed", attempts: 1, message_id: null });
    expect(failed?.error).toMatch(/^Attempt 1 failed: .*ECONNREFUSED/);

    // The retry (pg-boss with backoff, here called directly) goes to the working sink.
    expect(await deliverDigest(payload)).toBe("sent");
    expect(await deliverDigest(payload)).toBe("duplicate");
    const rows = (await deliveries(bossSub.id)).filter((r) => r.idempotency_key === payload.idempotencyKey);
    expect(rows).toEqual([expect.objectContaining({ status: "sent", attempts: 2, error: null })]);
    const after = await mailsTo(users.boss.email);
    expect(after.length).toBe(before + 1);
    expect(header(after[after.length - 1], "X-Tessera-Digest")).toBe(payload.idempotencyKey);
    refusing.close();
  });
});

import nodemailer from "nodemailer";
import { QueryTypes } from "sequelize";
import { authorizeMember } from "@/lib/auth/guard";
import { createInvitation } from "@/lib/team/invitations";
import { db } from "@/lib/db";
import { deliverDigest, saveSubscription } from "@/lib/digests/service";
import { getCapturedMail, listCapturedMail, type CapturedMail } from "@/lib/mail/outbox";
import { sendMail } from "@/lib/mail/send";
import { requireTestServices, testServices, uniqueAddress } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";

// Captured mail belongs to the workspace it was sent for: the sink files it
// under the X-Tessera-Workspace header that sendMail sets, and the Outbox
// reads (lib/mail/outbox.ts) return only the asking workspace's mail.

jest.setTimeout(60_000);

type Made = Awaited<ReturnType<typeof makeWorkspace>>;
let a: Made;
let b: Made;
const since = new Date(Date.now() - 1000);

beforeAll(async () => {
  await requireTestServices();
  a = await makeWorkspace({ manager: "manager", subscriber: "subscriber" });
  b = await makeWorkspace({ manager: "manager" });
});
afterAll(closeConnections);

async function workspaceOfMail(id: number): Promise<number | null> {
  const rows = await db().query<{ workspace_id: number | null }>("SELECT workspace_id FROM outbox_messages WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
  return rows[0]?.workspace_id ?? null;
}

async function sendTo(workspaceId: number | null, headers: Record<string, string> = {}): Promise<CapturedMail> {
  const to = uniqueAddress("scoped");
  await sendMail({ to, subject: `Scoping check ${to}`, text: "check", headers, workspaceId });
  return waitForMailTo(to, { since });
}

/** A mail put into the sink by hand (not through sendMail), with a raw workspace header. */
async function rawToSink(header: string | null): Promise<CapturedMail> {
  const s = testServices();
  const transport = nodemailer.createTransport({ host: s.smtpHost, port: s.smtpPort, secure: false, ignoreTLS: true });
  const to = uniqueAddress("raw");
  await transport.sendMail({ from: "someone@tessera.invalid", to, subject: "raw", text: "raw", headers: header === null ? {} : { "X-Tessera-Workspace": header } });
  transport.close();
  return waitForMailTo(to, { since });
}

describe("captured mail is filed under its workspace and read only there", () => {
  it("lists a workspace's mail for it and for no other; another workspace's mail by id is no such message", async () => {
    const ofA = await sendTo(a.workspace.id);
    const ofB = await sendTo(b.workspace.id);
    expect(await workspaceOfMail(ofA.id)).toBe(a.workspace.id);
    expect(await workspaceOfMail(ofB.id)).toBe(b.workspace.id);

    const listA = (await listCapturedMail(a.workspace.id, { limit: 500 })).map((m) => m.id);
    const listB = (await listCapturedMail(b.workspace.id, { limit: 500 })).map((m) => m.id);
    expect(listA).toContain(ofA.id);
    expect(listA).not.toContain(ofB.id);
    expect(listB).toEqual([ofB.id]);

    expect((await getCapturedMail(a.workspace.id, ofA.id))?.subject).toBe(ofA.subject);
    expect(await getCapturedMail(a.workspace.id, ofB.id)).toBeNull();
    expect(await getCapturedMail(b.workspace.id, ofA.id)).toBeNull();
  });

  it("shows mail of no workspace (the worker's self-check) on no Outbox at all", async () => {
    const none = await sendTo(null);
    expect(await workspaceOfMail(none.id)).toBeNull();
    expect(none.headers["x-tessera-workspace"]).toBeUndefined();
    for (const w of [a, b]) {
      expect((await listCapturedMail(w.workspace.id, { limit: 500 })).map((m) => m.id)).not.toContain(none.id);
      expect(await getCapturedMail(w.workspace.id, none.id)).toBeNull();
    }
  });

  it("files a mail under the workspace sendMail was given, even when the caller's headers name another", async () => {
    const mail = await sendTo(a.workspace.id, { "x-tessera-workspace": String(b.workspace.id) });
    expect(await workspaceOfMail(mail.id)).toBe(a.workspace.id);
    expect(await getCapturedMail(b.workspace.id, mail.id)).toBeNull();
  });

  it("files mail whose header is garbled, repeated or names no workspace under none", async () => {
    for (const header of ["12abc", "-3", "0", "2000000000", "99999999999", `${a.workspace.id}, ${b.workspace.id}`, null]) {
      const mail = await rawToSink(header);
      expect(await workspaceOfMail(mail.id)).toBeNull();
    }
  });

  it("files an invitation e-mail (sent by the worker) under the inviting workspace", async () => {
    const manager = await authorizeMember(a.users.manager.id, a.workspace.id, "team.manage");
    const email = uniqueAddress("invited");
    await createInvitation(manager, email, "economist");
    const mail = await waitForMailTo(email, { since, subjectContains: "invited" });
    expect(await workspaceOfMail(mail.id)).toBe(a.workspace.id);
    expect((await listCapturedMail(b.workspace.id, { limit: 500 })).map((m) => m.id)).not.toContain(mail.id);
  });

  it("files a digest under its subscription's workspace", async () => {
    const subscriber = a.users.subscriber;
    const subscriptionId = await saveSubscription(a.workspace.id, subscriber.id, {
      cadence: "weekly",
      scope: "all",
      indicatorCodes: [],
      threshold: "every_change",
      emptyPolicy: "say_so",
      active: true,
    });
    const key = `sub-${subscriptionId}:scoping-${Date.now()}`;
    expect(await deliverDigest({ subscriptionId, idempotencyKey: key, runId: null, coverage: "scoping check" })).toBe("sent");
    const mail = await waitForMailTo(subscriber.email, { since });
    expect(await workspaceOfMail(mail.id)).toBe(a.workspace.id);
  });

  it("leaves no invitation or digest captured during this file without a workspace", async () => {
    const orphans = await db().query<{ id: number; subject: string }>(
      `SELECT id, subject FROM outbox_messages
        WHERE received_at >= $1 AND workspace_id IS NULL AND (headers ? 'x-tessera-digest' OR headers->>'x-tessera-kind' = 'invitation')`,
      { bind: [since.toISOString()], type: QueryTypes.SELECT },
    );
    expect(orphans).toEqual([]);
  });
});

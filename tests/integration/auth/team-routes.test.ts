import { QueryTypes } from "sequelize";
import { GET as getMembers } from "@/app/api/w/[slug]/members/route";
import { DELETE as removeMember, PATCH as patchMember } from "@/app/api/w/[slug]/members/[userId]/route";
import { POST as postInvitation } from "@/app/api/w/[slug]/invitations/route";
import { GET as getAudit } from "@/app/api/w/[slug]/audit/route";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { models } from "@/lib/models";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "./fixtures";

// The route handlers are called directly with real Requests and the real
// database; only "who is signed in" (the next-auth cookie) is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(30_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

function signedInAs(user: { id: number; email: string; name: string } | null) {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}

function ctx(params: Record<string, string>) {
  return { params: Promise.resolve(params) };
}

function jsonRequest(method: string, body: unknown, raw = false) {
  return new Request("http://tessera.test/api", {
    method,
    headers: { "content-type": "application/json" },
    body: raw ? String(body) : JSON.stringify(body),
  });
}

describe("team API: authorisation", () => {
  it("answers 401 without a session", async () => {
    const { workspace } = await makeWorkspace({ boss: "manager" });
    signedInAs(null);
    const response = await getMembers(new Request("http://tessera.test"), ctx({ slug: workspace.slug }));
    expect(response.status).toBe(401);
  });

  it("answers 404 for another workspace's members, exactly as for a workspace that does not exist", async () => {
    const mine = await makeWorkspace({ boss: "manager" });
    const theirs = await makeWorkspace({ owner: "manager", analyst: "economist" });
    signedInAs(mine.users.boss);

    const other = await getMembers(new Request("http://tessera.test"), ctx({ slug: theirs.workspace.slug }));
    const missing = await getMembers(new Request("http://tessera.test"), ctx({ slug: "no-such-workspace-here" }));
    expect(other.status).toBe(404);
    expect(missing.status).toBe(404);
    expect(await other.json()).toEqual(await missing.json());

    // Nor can a manager of one workspace change a role in another.
    const patch = await patchMember(jsonRequest("PATCH", { role: "subscriber" }), ctx({ slug: theirs.workspace.slug, userId: String(theirs.users.analyst.id) }));
    expect(patch.status).toBe(404);
    const { Membership } = models();
    expect((await Membership.findOne({ where: { workspaceId: theirs.workspace.id, userId: theirs.users.analyst.id } }))?.role).toBe("economist");
  });

  it("answers 403 to a member whose role is too small", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", curator: "steward", reader: "subscriber" });
    for (const who of [users.curator, users.reader]) {
      signedInAs(who);
      expect((await getMembers(new Request("http://tessera.test"), ctx({ slug: workspace.slug }))).status).toBe(403);
      expect((await getAudit(new Request("http://tessera.test"), ctx({ slug: workspace.slug }))).status).toBe(403);
      const invite = await postInvitation(jsonRequest("POST", { email: "x@example.org", role: "manager" }), ctx({ slug: workspace.slug }));
      expect(invite.status).toBe(403);
    }
  });

  it("lists members for a manager", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", analyst: "economist" });
    signedInAs(users.boss);
    const response = await getMembers(new Request("http://tessera.test"), ctx({ slug: workspace.slug }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { members: { email: string; role: string }[] };
    expect(body.members.map((m) => [m.email, m.role])).toEqual([
      [users.boss.email, "manager"],
      [users.analyst.email, "economist"],
    ]);
  });
});

describe("team API: request bodies", () => {
  it("answers 400 naming the field for a malformed invitation", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager" });
    signedInAs(users.boss);
    const badEmail = await postInvitation(jsonRequest("POST", { email: "not an address", role: "economist" }), ctx({ slug: workspace.slug }));
    expect(badEmail.status).toBe(400);
    expect(await badEmail.json()).toMatchObject({ field: "email", error: expect.stringContaining("valid e-mail address") });

    const badRole = await postInvitation(jsonRequest("POST", { email: "a@example.org", role: "owner" }), ctx({ slug: workspace.slug }));
    expect(badRole.status).toBe(400);
    expect(await badRole.json()).toMatchObject({ field: "role" });

    const notJson = await postInvitation(jsonRequest("POST", "{email:", true), ctx({ slug: workspace.slug }));
    expect(notJson.status).toBe(400);
    expect(await notJson.json()).toMatchObject({ error: "The request body is not valid JSON." });
  });

  it("answers 400 naming the field for a bad role change, and changes nothing", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", analyst: "economist" });
    signedInAs(users.boss);
    const response = await patchMember(jsonRequest("PATCH", { role: "superuser" }), ctx({ slug: workspace.slug, userId: String(users.analyst.id) }));
    expect(response.status).toBe(400);
    expect(await response.json()).toMatchObject({ field: "role" });
  });

  it("does not check the body before the caller is authorised (no hints to strangers)", async () => {
    const theirs = await makeWorkspace({ owner: "manager" });
    const mine = await makeWorkspace({ boss: "manager" });
    signedInAs(mine.users.boss);
    const response = await postInvitation(jsonRequest("POST", { email: "bad" }), ctx({ slug: theirs.workspace.slug }));
    expect(response.status).toBe(404);
  });
});

describe("team API: managers", () => {
  it("refuses to remove or demote the last manager, and keeps them", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", analyst: "economist" });
    signedInAs(users.boss);
    const removal = await removeMember(new Request("http://tessera.test", { method: "DELETE" }), ctx({ slug: workspace.slug, userId: String(users.boss.id) }));
    expect(removal.status).toBe(409);
    expect((await removal.json()).error).toMatch(/last manager/);
    const demotion = await patchMember(jsonRequest("PATCH", { role: "steward" }), ctx({ slug: workspace.slug, userId: String(users.boss.id) }));
    expect(demotion.status).toBe(409);
    const { Membership } = models();
    expect((await Membership.findOne({ where: { workspaceId: workspace.id, userId: users.boss.id } }))?.role).toBe("manager");
  });

  it("lets one of two managers go, but never both, even when both requests race", async () => {
    const { workspace, users } = await makeWorkspace({ first: "manager", second: "manager" });
    signedInAs(users.first);
    const results = await Promise.all(
      [users.first, users.second].map((u) =>
        removeMember(new Request("http://tessera.test", { method: "DELETE" }), ctx({ slug: workspace.slug, userId: String(u.id) })),
      ),
    );
    expect(results.map((r) => r.status).sort()).toEqual([200, 409]);
    const { Membership } = models();
    expect(await Membership.count({ where: { workspaceId: workspace.id, role: "manager" } })).toBe(1);
  });

  it("changes a role and records who did it, to whom and when in the audit trail", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", analyst: "economist" });
    signedInAs(users.boss);
    const before = new Date(Date.now() - 1000);
    const response = await patchMember(jsonRequest("PATCH", { role: "steward" }), ctx({ slug: workspace.slug, userId: String(users.analyst.id) }));
    expect(response.status).toBe(200);
    const body = (await response.json()) as { members: { email: string; role: string }[] };
    expect(body.members.find((m) => m.email === users.analyst.email)?.role).toBe("steward");

    const [event] = await db().query<{ actor_id: number; target: string; detail: unknown; at: Date }>(
      "SELECT actor_id, target, detail, at FROM audit_events WHERE workspace_id = $1 AND action = 'member.role-changed'",
      { bind: [workspace.id], type: QueryTypes.SELECT },
    );
    expect(event).toMatchObject({ actor_id: users.boss.id, target: users.analyst.email, detail: { from: "economist", to: "steward" } });
    expect(new Date(event.at).getTime()).toBeGreaterThanOrEqual(before.getTime());

    const audit = await getAudit(new Request("http://tessera.test"), ctx({ slug: workspace.slug }));
    const events = ((await audit.json()) as { events: { action: string; target: string }[] }).events;
    expect(events[0]).toMatchObject({ action: "member.role-changed", target: users.analyst.email });
  });

  it("removes a member and records it", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", analyst: "economist" });
    signedInAs(users.boss);
    const response = await removeMember(new Request("http://tessera.test", { method: "DELETE" }), ctx({ slug: workspace.slug, userId: String(users.analyst.id) }));
    expect(response.status).toBe(200);
    const { Membership, AuditEvent } = models();
    expect(await Membership.count({ where: { workspaceId: workspace.id } })).toBe(1);
    const event = await AuditEvent.findOne({ where: { workspaceId: workspace.id, action: "member.removed" } });
    expect(event?.target).toBe(users.analyst.email);
    expect(event?.actorId).toBe(users.boss.id);
  });
});

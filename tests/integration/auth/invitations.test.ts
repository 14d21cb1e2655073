import { QueryTypes } from "sequelize";
import { POST as acceptRoute } from "@/app/api/invitations/accept/route";
import { POST as postInvitation } from "@/app/api/w/[slug]/invitations/route";
import InvitePage from "@/app/(auth)/invite/[token]/page";
import { AcceptInvitation } from "@/components/auth/accept-invitation";
import { SignInForm } from "@/components/auth/sign-in-form";
import { SignOutButton } from "@/components/shell/sign-out-button";
import { authorizeMember } from "@/lib/auth/guard";
import { verifySignIn } from "@/lib/auth/credentials";
import { getSessionUser } from "@/lib/auth/session";
import { createInvitation, viewInvitation } from "@/lib/team/invitations";
import { hashToken } from "@/lib/auth/tokens";
import { db } from "@/lib/db";
import { models } from "@/lib/models";
import { firstLink, waitForMailTo } from "@/tests/helpers/mail";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices, uniqueAddress } from "@/tests/helpers/env";
import { makeUser, makeWorkspace } from "./fixtures";

jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

async function accept(body: Record<string, unknown>) {
  const response = await acceptRoute(
    new Request("http://tessera.test/api/invitations/accept", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify(body),
    }),
  );
  return { status: response.status, body: (await response.json()) as Record<string, unknown> };
}

/** The component types in a rendered server component's element tree (client components are not run). */
function componentsIn(node: unknown, found: unknown[] = []): unknown[] {
  if (Array.isArray(node)) {
    for (const child of node) componentsIn(child, found);
  } else if (node && typeof node === "object" && "props" in node) {
    const element = node as { type: unknown; props: { children?: unknown } };
    if (typeof element.type === "function") found.push(element.type);
    componentsIn(element.props.children, found);
  }
  return found;
}

async function managerContext() {
  const { workspace, users } = await makeWorkspace({ boss: "manager" });
  return { workspace, boss: users.boss, member: await authorizeMember(users.boss.id, workspace.slug, "team.manage") };
}

describe("invitations", () => {
  beforeEach(() => sessionMock.mockResolvedValue(null));

  it("stores only the token's hash", async () => {
    const { member } = await managerContext();
    const { token, invitation } = await createInvitation(member, uniqueAddress("hash"), "economist");
    const rows = await db().query<Record<string, unknown>>("SELECT * FROM invitations WHERE id = $1", {
      bind: [invitation.id],
      type: QueryTypes.SELECT,
    });
    expect(rows[0].token_hash).toBe(hashToken(token));
    expect(JSON.stringify(rows[0])).not.toContain(token);
  });

  it("sends the e-mail through the job queue; the worker's mail arrives in outbox_messages with the link", async () => {
    const { workspace, boss } = await managerContext();
    sessionMock.mockResolvedValue({ id: boss.id, email: boss.email, name: boss.name });
    const address = uniqueAddress("invitee");
    const since = new Date(Date.now() - 1000);
    const response = await postInvitation(
      new Request("http://tessera.test", { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ email: address, role: "steward" }) }),
      { params: Promise.resolve({ slug: workspace.slug }) },
    );
    expect(response.status).toBe(201);
    const created = (await response.json()) as { invitation: { email: string; role: string } };
    expect(created.invitation).toMatchObject({ email: address, role: "steward" });
    expect(JSON.stringify(created)).not.toMatch(/token/i);

    const mail = await waitForMailTo(address, { since, subjectContains: workspace.name });
    expect(mail.html).toContain("Accept the invitation");
    expect(mail.text).toContain("as Data steward");
    expect(mail.headers["x-tessera-kind"]).toBe("invitation");
    const link = firstLink(mail);
    expect(link).toMatch(new RegExp(`^${process.env.NEXTAUTH_URL}/invite/[A-Za-z0-9_-]{43}$`));
    const token = link!.split("/invite/")[1];
    expect(await viewInvitation(token)).toMatchObject({ state: "pending", email: address, role: "steward", workspaceSlug: workspace.slug, accountExists: false });

    const { AuditEvent } = models();
    expect(await AuditEvent.findOne({ where: { workspaceId: workspace.id, action: "invitation.sent", target: address } })).not.toBeNull();
  });

  it("creates the account for a new person, once; a second use of the link is refused", async () => {
    const { workspace, member } = await managerContext();
    const address = uniqueAddress("newbie");
    const { token } = await createInvitation(member, address, "economist");

    const missingName = await accept({ token, password: "long enough password" });
    expect(missingName).toMatchObject({ status: 400, body: { field: "name" } });

    const first = await accept({ token, name: "New Person", password: "long enough password" });
    expect(first).toEqual({ status: 200, body: { workspaceSlug: workspace.slug, email: address, createdAccount: true } });
    const signIn = await verifySignIn(address, "long enough password", "203.0.113.9");
    expect(signIn.ok).toBe(true);
    if (signIn.ok) expect((await authorizeMember(signIn.user.id, workspace.slug, "runs.manage")).role).toBe("economist");

    const again = await accept({ token, name: "Someone Else", password: "another long password" });
    expect(again.status).toBe(410);
    expect(again.body.error).toMatch(/already been used/);
    expect((await viewInvitation(token)).state).toBe("used");

    const { AuditEvent } = models();
    expect(await AuditEvent.count({ where: { workspaceId: workspace.id, action: "invitation.accepted", target: address } })).toBe(1);
  });

  it("refuses an expired invitation with a clear message and creates nothing", async () => {
    const { member } = await managerContext();
    const address = uniqueAddress("late");
    const { token, invitation } = await createInvitation(member, address, "subscriber");
    await db().query("UPDATE invitations SET expires_at = now() - interval '1 minute' WHERE id = $1", { bind: [invitation.id] });

    expect((await viewInvitation(token)).state).toBe("expired");
    const result = await accept({ token, name: "Too Late", password: "long enough password" });
    expect(result.status).toBe(410);
    expect(result.body.error).toMatch(/expired/);
    const { User } = models();
    expect(await User.findOne({ where: { email: address } })).toBeNull();
  });

  it("refuses a made-up token", async () => {
    const result = await accept({ token: "A".repeat(43), name: "X", password: "long enough password" });
    expect(result.status).toBe(410);
    expect(result.body.error).toMatch(/not valid/);
  });

  it("makes an existing user sign in as the invited address to accept", async () => {
    const { workspace, member } = await managerContext();
    const existing = await makeUser("existing");
    const other = await makeUser("other");
    const { token } = await createInvitation(member, existing.email, "steward");

    expect((await accept({ token })).status).toBe(401);
    sessionMock.mockResolvedValue({ id: other.id, email: other.email, name: other.name });
    expect((await accept({ token })).status).toBe(403);
    sessionMock.mockResolvedValue({ id: existing.id, email: existing.email, name: existing.name });
    expect(await accept({ token })).toEqual({ status: 200, body: { workspaceSlug: workspace.slug, email: existing.email, createdAccount: false } });
    expect((await authorizeMember(existing.id, workspace.slug, "data.curate")).role).toBe("steward");
  });

  describe("a captured or forwarded link used by a manager of another workspace, signed in as themselves", () => {
    /** Everything the link could have changed: accounts, memberships in either workspace, the invitation itself. */
    async function snapshot(workspaceIds: number[], invitee: string, token: string) {
      const [counts] = await db().query<{ memberships: number; invitee: number }>(
        `SELECT (SELECT count(*)::int FROM memberships WHERE workspace_id = ANY($1::int[])) AS memberships,
                (SELECT count(*)::int FROM users WHERE email = $2) AS invitee`,
        { bind: [workspaceIds, invitee], type: QueryTypes.SELECT },
      );
      return { ...counts, state: (await viewInvitation(token)).state };
    }

    async function setting() {
      const victim = await managerContext();
      const other = await makeWorkspace({ rival: "manager" });
      const rival = other.users.rival;
      sessionMock.mockResolvedValue({ id: rival.id, email: rival.email, name: rival.name });
      return { victim, other, rival };
    }

    it("cannot create the invitee's account or join anyone when the address has no account yet", async () => {
      const { victim, other, rival } = await setting();
      const invitee = uniqueAddress("captured-new");
      const { token } = await createInvitation(victim.member, invitee, "manager");
      const before = await snapshot([victim.workspace.id, other.workspace.id], invitee, token);

      const attempt = await accept({ token, name: "Rival Manager", password: "rival's own password" });
      expect(attempt.status).toBe(403);
      expect(attempt.body.error).toMatch(/signed in with another account\. Sign out/);
      // Without a name and password either, and with the invited address itself as the "name".
      expect((await accept({ token })).status).toBe(403);
      expect((await accept({ token, name: invitee, password: "long enough password" })).status).toBe(403);

      expect(await snapshot([victim.workspace.id, other.workspace.id], invitee, token)).toEqual(before);
      expect(before).toMatchObject({ invitee: 0, state: "pending" });
      await expect(authorizeMember(rival.id, victim.workspace.slug, "results.view")).rejects.toMatchObject({ status: 404 });

      // The invitee, signed out, can still use their link.
      sessionMock.mockResolvedValue(null);
      expect(await accept({ token, name: "Real Invitee", password: "long enough password" })).toMatchObject({ status: 200, body: { email: invitee, createdAccount: true } });
    });

    it("cannot join the rival or the invitee when the address already has an account", async () => {
      const { victim, other, rival } = await setting();
      const invitee = await makeUser("captured-existing");
      const { token } = await createInvitation(victim.member, invitee.email, "steward");
      const before = await snapshot([victim.workspace.id, other.workspace.id], invitee.email, token);

      const attempt = await accept({ token });
      expect(attempt.status).toBe(403);
      expect(attempt.body.error).toMatch(/signed in with another account/);
      expect(await snapshot([victim.workspace.id, other.workspace.id], invitee.email, token)).toEqual(before);
      await expect(authorizeMember(rival.id, victim.workspace.slug, "results.view")).rejects.toMatchObject({ status: 404 });
      await expect(authorizeMember(invitee.id, victim.workspace.slug, "results.view")).rejects.toMatchObject({ status: 404 });
      expect(before.state).toBe("pending");
    });

    it("is shown, on the invitation page, a sign-out prompt and neither the create-account nor the accept form", async () => {
      const { victim } = await setting();
      const fresh = await createInvitation(victim.member, uniqueAddress("captured-view"), "economist");
      const existing = await createInvitation(victim.member, (await makeUser("captured-view-existing")).email, "economist");
      for (const { token } of [fresh, existing]) {
        const shown = componentsIn(await InvitePage({ params: Promise.resolve({ token }) }));
        expect(shown).toContain(SignOutButton);
        expect(shown).not.toContain(AcceptInvitation);
        expect(shown).not.toContain(SignInForm);
      }
      // Signed out, the same links offer the create form and the sign-in form respectively.
      sessionMock.mockResolvedValue(null);
      expect(componentsIn(await InvitePage({ params: Promise.resolve({ token: fresh.token }) }))).toContain(AcceptInvitation);
      expect(componentsIn(await InvitePage({ params: Promise.resolve({ token: existing.token }) }))).toContain(SignInForm);
    });
  });

  it("only the newest invitation to an address works", async () => {
    const { member } = await managerContext();
    const address = uniqueAddress("twice");
    const older = await createInvitation(member, address, "subscriber");
    const newer = await createInvitation(member, address, "economist");
    expect((await viewInvitation(older.token)).state).toBe("revoked");
    expect((await viewInvitation(newer.token)).state).toBe("pending");
  });

  it("refuses to invite someone who is already a member", async () => {
    const { member, boss } = await managerContext();
    await expect(createInvitation(member, boss.email, "economist")).rejects.toThrow(/already a member/);
  });
});

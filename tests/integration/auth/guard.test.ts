import { AccessError } from "@/lib/auth/errors";
import { authorizeMember } from "@/lib/auth/guard";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeUser, makeWorkspace } from "./fixtures";

jest.setTimeout(30_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

async function statusOf(promise: Promise<unknown>): Promise<number | "ok"> {
  try {
    await promise;
    return "ok";
  } catch (error) {
    if (error instanceof AccessError) return error.status;
    throw error;
  }
}

describe("authorizeMember", () => {
  it("answers 401 without a user, 404 for other workspaces and missing ones alike, 403 for a small role", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager", reader: "subscriber" });
    const other = await makeWorkspace({ owner: "manager" });
    const stranger = await makeUser("stranger");

    expect(await statusOf(authorizeMember(null, workspace.slug, "results.view"))).toBe(401);
    expect(await statusOf(authorizeMember(stranger.id, workspace.slug, "results.view"))).toBe(404);
    expect(await statusOf(authorizeMember(users.boss.id, other.workspace.slug, "results.view"))).toBe(404);
    expect(await statusOf(authorizeMember(users.boss.id, "no-such-workspace-anywhere", "results.view"))).toBe(404);
    expect(await statusOf(authorizeMember(users.reader.id, workspace.slug, "team.manage"))).toBe(403);
    expect(await statusOf(authorizeMember(users.reader.id, workspace.slug, "runs.manage"))).toBe(403);
    expect(await statusOf(authorizeMember(users.reader.id, workspace.slug, "results.view"))).toBe("ok");
  });

  it("gives the same message for a missing workspace and one you are not in", async () => {
    const { workspace } = await makeWorkspace({ boss: "manager" });
    const stranger = await makeUser("stranger");
    const messages: string[] = [];
    for (const ref of [workspace.slug, "missing-workspace-xyz", workspace.id, 2_000_000_000]) {
      await authorizeMember(stranger.id, ref, "results.view").catch((e: Error) => messages.push(e.message));
    }
    expect(new Set(messages).size).toBe(1);
    expect(messages).toHaveLength(4);
  });

  it("returns the membership context by slug or by id", async () => {
    const { workspace, users } = await makeWorkspace({ boss: "manager" });
    const bySlug = await authorizeMember(users.boss.id, workspace.slug, "team.manage");
    const byId = await authorizeMember(users.boss.id, workspace.id, "team.manage");
    expect(bySlug).toEqual(byId);
    expect(bySlug).toEqual({
      user: { id: users.boss.id, email: users.boss.email, name: users.boss.name },
      workspace: { id: workspace.id, slug: workspace.slug, name: workspace.name },
      role: "manager",
    });
  });
});

import path from "node:path";
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { verifySignIn } from "@/lib/auth/credentials";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import demo from "@/seeders/demo-accounts.json";

jest.setTimeout(60_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

// eslint-disable-next-line @typescript-eslint/no-require-imports -- sequelize-cli seeders are CommonJS by design
const seeder = require(path.join(process.cwd(), "seeders", "20261201000300-demo-workspace-and-accounts.js")) as {
  up: (qi: unknown) => Promise<void>;
};

describe("demo seeder", () => {
  it("is idempotent: running it twice more leaves one copy of each account, the workspace and each membership", async () => {
    await seeder.up(db().getQueryInterface());
    await seeder.up(db().getQueryInterface());
    const emails = demo.accounts.map((a) => a.email);
    const [users] = await db().query<{ count: string }>("SELECT count(*) FROM users WHERE email = ANY($1)", {
      bind: [emails],
      type: QueryTypes.SELECT,
    });
    expect(Number(users.count)).toBe(demo.accounts.length);
    const [workspaces] = await db().query<{ count: string }>("SELECT count(*) FROM workspaces WHERE slug = $1", {
      bind: [demo.workspace.slug],
      type: QueryTypes.SELECT,
    });
    expect(Number(workspaces.count)).toBe(1);
    const roles = await db().query<{ email: string; role: string }>(
      `SELECT u.email, m.role FROM memberships m JOIN users u ON u.id = m.user_id JOIN workspaces w ON w.id = m.workspace_id
        WHERE w.slug = $1 AND u.email = ANY($2) ORDER BY u.email`,
      { bind: [demo.workspace.slug, emails], type: QueryTypes.SELECT },
    );
    expect(roles).toEqual(demo.accounts.map((a) => ({ email: a.email, role: a.role })).sort((a, b) => a.email.localeCompare(b.email)));
  });

  it("leaves the demo passwords working", async () => {
    const manager = demo.accounts.find((a) => a.role === "manager")!;
    const result = await verifySignIn(manager.email, manager.password, "192.0.2.77");
    expect(result.ok).toBe(true);
  });
});

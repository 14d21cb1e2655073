import { randomBytes } from "node:crypto";
import { hashPassword } from "@/lib/auth/passwords";
import type { Role } from "@/lib/auth/roles";
import { models } from "@/lib/models";

// Each test file builds its own users and workspace with unique names, so
// files can run in any order against the shared test database.

export function unique(label: string): string {
  return `${label}-${Date.now().toString(36)}-${randomBytes(3).toString("hex")}`;
}

export const PASSWORD = "correct horse battery";

export async function makeUser(label: string, password = PASSWORD) {
  const { User } = models();
  return User.create({ email: `${unique(label)}@tessera-test.invalid`, name: `Test ${label}`, passwordHash: await hashPassword(password) });
}

/** A workspace whose members hold the given roles, in order; returns users by role label. */
export async function makeWorkspace(roles: Record<string, Role>) {
  const { Workspace, Membership } = models();
  const users: Record<string, Awaited<ReturnType<typeof makeUser>>> = {};
  for (const label of Object.keys(roles)) users[label] = await makeUser(label);
  const first = Object.values(users)[0];
  const workspace = await Workspace.create({ slug: unique("ws"), name: `Workspace ${unique("n")}`, createdBy: first?.id ?? null });
  for (const [label, role] of Object.entries(roles)) {
    await Membership.create({ workspaceId: workspace.id, userId: users[label].id, role });
  }
  return { workspace, users };
}

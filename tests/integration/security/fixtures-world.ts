import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import { authorizeMember, type MemberContext } from "@/lib/auth/guard";
import type { Role } from "@/lib/auth/roles";
import { createInvitation } from "@/lib/team/invitations";
import { db } from "@/lib/db";
import { saveSubscription } from "@/lib/digests/service";
import { completeUpload, createUpload } from "@/lib/intake/service";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { resolveRunParams } from "@/lib/runs/service";
import { insertRun } from "@/lib/runs/store";
import { runPiece } from "@/lib/runs/worker";
import { putObject } from "@/lib/storage/s3";
import { createToken } from "@/lib/tokens/service";
import { models } from "@/lib/models";
import { uniqueAddress } from "@/tests/helpers/env";
import { makeUser, makeWorkspace } from "@/tests/integration/auth/fixtures";
import { gridGeoJson, sha256 } from "@/tests/integration/intake/fixtures";
import { loadVeldmarkPanel, type LoadedPanel, type VersionState } from "@/tests/integration/runs/fixtures";

// One workspace with a member in each role, real published data and a
// completed run, plus a manager of another workspace. Rows that a call
// consumes (a validated version to publish, a queued run to cancel, a member
// to remove …) are made fresh per call by the helpers below.

export const MEMBER_ROLES = ["manager", "steward", "economist", "subscriber"] as const satisfies readonly Role[];
export type MemberRole = (typeof MEMBER_ROLES)[number];
/** Who calls: a member in one of the four roles, a manager of another workspace, or nobody. */
export type Caller = MemberRole | "outsider" | "signed-out";
export const CALLERS: readonly Caller[] = [...MEMBER_ROLES, "outsider", "signed-out"];

type UserRow = Awaited<ReturnType<typeof makeUser>>;

export interface World {
  workspace: { id: number; slug: string; name: string };
  users: Record<MemberRole, UserRow>;
  outsider: UserRow;
  outsiderSlug: string;
  /** Published panel version over published boundaries (the invented Veldmark districts). */
  panel: LoadedPanel;
  boundarySetId: number;
  indicator: string;
  periods: string[];
  /** A completed run over `panel` (global and local, 99 permutations). */
  runId: number;
  /** A received (checked) panel upload, for the mapping preview. */
  receivedPanelUpload: string;
}

export const WORLD_INDICATORS = ["broadband_coverage", "unemployment_rate"];
export const WORLD_PERIODS = ["2012", "2013", "2014"];

function tag(): string {
  return `${Date.now().toString(36)}${randomBytes(3).toString("hex")}`;
}

/** The MemberContext the guard gives `role`'s user, for calling domain code directly. */
export async function memberOf(world: Pick<World, "workspace" | "users">, role: MemberRole = "manager"): Promise<MemberContext> {
  return authorizeMember(world.users[role].id, world.workspace.slug, "results.view");
}

/** Runs every piece of a stored run in this process (as the worker would) until it is completed. */
export async function completeRunInProcess(runId: number, indicators: readonly string[]): Promise<void> {
  for (const indicator of indicators) await runPiece(runId, indicator);
  const [row] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [runId], type: QueryTypes.SELECT });
  if (row?.state !== "completed") throw new Error(`fixture run ${runId} ended ${row?.state ?? "missing"}, not completed`);
}

/** A run over `panelVersionId`, stored but not queued (state queued), so nothing else picks it up. */
export async function queuedRun(workspaceId: number, createdBy: number, panelVersionId: number, indicators = WORLD_INDICATORS, periods = WORLD_PERIODS): Promise<number> {
  const choice = runParamsInputSchema.parse({ seed: 7, permutations: 99, indicators, periods, local: true });
  const params = await resolveRunParams(workspaceId, panelVersionId, choice);
  return insertRun({ workspaceId, params, createdBy, origin: "user" });
}

export async function buildWorld(): Promise<World> {
  const made = await makeWorkspace({ manager: "manager", steward: "steward", economist: "economist", subscriber: "subscriber" });
  const other = await makeWorkspace({ outsider: "manager" });
  const workspace = { id: made.workspace.id, slug: made.workspace.slug, name: made.workspace.name };
  const users = made.users as Record<MemberRole, UserRow>;
  const panel = await loadVeldmarkPanel(workspace.id, { indicators: WORLD_INDICATORS, periods: WORLD_PERIODS });
  const [set] = await db().query<{ boundary_set_id: number }>("SELECT boundary_set_id FROM boundary_versions WHERE id = $1", {
    bind: [panel.boundaryVersionId],
    type: QueryTypes.SELECT,
  });
  const partial = { workspace, users };
  const runId = await queuedRun(workspace.id, users.economist.id, panel.panelVersionId);
  await completeRunInProcess(runId, WORLD_INDICATORS);
  const receivedPanelUpload = await receivedUpload(partial, "panel", panelCsv(panel, 1));
  return {
    workspace,
    users,
    outsider: other.users.outsider,
    outsiderSlug: other.workspace.slug,
    panel,
    boundarySetId: set.boundary_set_id,
    indicator: WORLD_INDICATORS[1],
    periods: WORLD_PERIODS,
    runId,
    receivedPanelUpload,
  };
}

/** A small long-layout panel over the world's regions; `salt` makes its bytes (and checksum) unique. */
export function panelCsv(panel: Pick<LoadedPanel, "regions">, salt: number): string {
  const lines = ["region,period,indicator,value"];
  panel.regions.forEach((code, i) => lines.push(`${code},2015,unemployment_rate,${(i % 17) + salt / 1000}`));
  return `${lines.join("\n")}\n`;
}

/** An invented 3 × 3 grid as GeoJSON with a unique prefix (so a unique checksum). */
export function uniqueGridGeoJson(): string {
  return gridGeoJson(3, `Q${tag()}-`);
}

/** An upload whose bytes are in S3 but which is not yet completed (state pending). */
export async function pendingUpload(world: Pick<World, "workspace" | "users">, kind: "panel" | "boundaries", content: string): Promise<string> {
  const member = await memberOf(world, "steward");
  const fileName = kind === "panel" ? `panel-${tag()}.csv` : `grid-${tag()}.geojson`;
  const ticket = await createUpload(member, { kind, fileName, size: Buffer.byteLength(content), sha256: sha256(content) });
  const { Upload } = models();
  const upload = await Upload.findByPk(ticket.uploadId);
  if (!upload) throw new Error(`fixture upload ${ticket.uploadId} vanished`);
  await putObject(upload.s3Key, content, ticket.contentType);
  return ticket.uploadId;
}

/** An upload checked and received, ready to become a version. */
export async function receivedUpload(world: Pick<World, "workspace" | "users">, kind: "panel" | "boundaries", content: string): Promise<string> {
  const id = await pendingUpload(world, kind, content);
  const view = await completeUpload(await memberOf(world, "steward"), id);
  if (view.state !== "received") throw new Error(`fixture upload ${id} is ${view.state}: ${view.error ?? ""}`);
  return id;
}

/** A panel version in `state` over its own published boundaries, one indicator and one period. */
export async function versionIn(world: Pick<World, "workspace">, state: VersionState): Promise<LoadedPanel> {
  return loadVeldmarkPanel(world.workspace.id, { state, indicators: ["unemployment_rate"], periods: ["2012"] });
}

/** Validated (unpublished) boundaries: a new set whose version copies the world's published regions and stored topology (with its checksum). */
export async function validatedBoundaries(world: Pick<World, "workspace" | "panel">): Promise<number> {
  return db().transaction(async (transaction) => {
    const q = <T extends object>(sql: string, bind: unknown[]) => db().query<T>(sql, { bind, type: QueryTypes.SELECT, transaction });
    const [set] = await q<{ id: number }>("INSERT INTO boundary_sets (workspace_id, name, created_at, updated_at) VALUES ($1, $2, now(), now()) RETURNING id", [
      world.workspace.id,
      `Unpublished districts ${tag()}`,
    ]);
    const [version] = await q<{ id: number }>(
      `INSERT INTO boundary_versions (boundary_set_id, version, state, s3_key, file_name, byte_size, sha256, topology_sha256, format, object_name, id_property,
                                      name_property, region_count, validated_at, created_at, updated_at)
       SELECT $1, 1, 'validated', s3_key, file_name, byte_size, $2, COALESCE(topology_sha256, sha256), format, object_name, id_property, name_property, region_count, now(), now(), now()
         FROM boundary_versions WHERE id = $3 RETURNING id`,
      [set.id, randomBytes(32).toString("hex"), world.panel.boundaryVersionId],
    );
    await db().query("INSERT INTO regions (boundary_version_id, code, name, attributes) SELECT $1, code, name, attributes FROM regions WHERE boundary_version_id = $2 ORDER BY id", {
      bind: [version.id, world.panel.boundaryVersionId],
      transaction,
    });
    return version.id;
  });
}

/** A new member with `role`, for calls that change or remove a member. */
export async function extraMember(world: Pick<World, "workspace">, role: Role = "economist"): Promise<UserRow> {
  const user = await makeUser(`extra-${role}`);
  await models().Membership.create({ workspaceId: world.workspace.id, userId: user.id, role });
  return user;
}

/** A pending invitation (its e-mail goes through the real queue and SMTP sink); returns its id and token. */
export async function pendingInvitation(world: Pick<World, "workspace" | "users">, email = uniqueAddress("invitee")): Promise<{ id: number; token: string; email: string }> {
  const { invitation, token } = await createInvitation(await memberOf(world, "manager"), email, "economist");
  return { id: invitation.id, token, email: invitation.email };
}

/** Makes sure `userId` has an active digest subscription in the world's workspace; returns its id. */
export async function subscriptionFor(world: Pick<World, "workspace">, userId: number): Promise<number> {
  return saveSubscription(world.workspace.id, userId, { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so", active: true });
}

/** A personal API token of `role`'s user in the world's workspace, made through the service as the Account screen does. */
export async function apiTokenOf(
  world: Pick<World, "workspace" | "users">,
  role: MemberRole,
  tokenRole: Role = role,
  name = `script of ${role}`,
): Promise<{ id: string; token: string }> {
  const created = await createToken(await memberOf(world, role), { name, role: tokenRole, expiresInDays: 30 });
  return { id: created.apiToken.id, token: created.token };
}

const callerTokens = new WeakMap<object, Map<MemberRole, Promise<string>>>();
/** One token per member role and world, kept for the whole file (a member may hold only so many). */
export function callerToken(world: Pick<World, "workspace" | "users">, role: MemberRole): Promise<string> {
  let byRole = callerTokens.get(world);
  if (!byRole) callerTokens.set(world, (byRole = new Map()));
  let token = byRole.get(role);
  if (!token) byRole.set(role, (token = apiTokenOf(world, role).then((t) => t.token)));
  return token;
}

import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import type { Capability } from "@/lib/auth/roles";
import { db } from "@/lib/db";
import { uniqueAddress } from "@/tests/helpers/env";
import { unique } from "@/tests/integration/auth/fixtures";
import {
  apiTokenOf,
  validatedBoundaries,
  extraMember,
  panelCsv,
  pendingInvitation,
  pendingUpload,
  queuedRun,
  receivedUpload,
  subscriptionFor,
  uniqueGridGeoJson,
  versionIn,
  type Caller,
  type World,
} from "./fixtures-world";
import { PUBLIC_ROWS } from "./route-matrix-public";
import { authorizeMember } from "@/lib/auth/guard";
import { deriveCrosswalkFor } from "@/lib/reforms/service";
import { createToken } from "@/lib/tokens/service";

// The access matrix: one row per (route file, exported HTTP method). The
// test (access-matrix.test.ts) finds every app/**/route.ts and fails when a
// pair has no row here, or a row names a pair that no longer exists.
//
// Workspace routes: the capability the row names decides who gets 2xx and
// who 403 (DOCUMENTED_ROLES below, copied from the roles table in docs/guarantees.md); a manager of
// another workspace gets 404 exactly as for a workspace that does not exist,
// and a signed-out visitor 401. Routes outside workspaces have their own
// rules, written out case by case in route-matrix-public.ts.

export const METHODS = ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"] as const;
export type Method = (typeof METHODS)[number];

/** the roles table in docs/guarantees.md, transcribed: which roles hold each capability. Deliberately not computed from lib/auth/roles.ts. */
export const DOCUMENTED_ROLES: Record<Capability, readonly Caller[]> = {
  "results.view": ["manager", "steward", "economist", "subscriber"], // see published results, timelines, maps
  "digests.subscribe": ["manager", "steward", "economist", "subscriber"], // manage own digest subscription
  "runs.manage": ["manager", "steward", "economist"], // start, cancel and rerun analyses; export results
  "data.curate": ["manager", "steward"], // upload boundaries and panels, validate, publish, archive
  "data.view-unpublished": ["manager", "steward"], // see unpublished uploads and validation reports
  "team.manage": ["manager"], // invite, change roles, remove members, see the audit trail
};

/** One call: route parameters, an optional query string (without "?") and an optional JSON body. */
export interface Call {
  params: Record<string, string>;
  search?: string;
  body?: unknown;
}

export interface WorkspaceRow {
  kind: "workspace";
  route: string;
  method: Method;
  capability: Capability;
  /** The status an allowed role gets. */
  ok: number;
  /**
   * A second row for the same route and method, on other data, names what differs
   * (e.g. "an unpublished version"). Its capability is the one the data needs,
   * which the handler checks after memberRoute's guard.
   */
  variant?: string;
  /** The status a member whose role is too small gets: 403, or 404 where the data does not exist for them (the roles table in docs/guarantees.md). */
  refused?: 403 | 404;
  /** What the call does, for the reader of the matrix. */
  does: string;
  /** Builds the call for `caller`; rows that consume something (publish, cancel, remove …) make it fresh here. */
  prepare: (world: World, caller: Caller) => Promise<Call>;
  /** A body the schema refuses, and the field the 400 must name. */
  invalidBody?: { body: unknown; field: string };
  /** A query string the search-parameter schema refuses, and the parameter the 400 must name. */
  invalidQuery?: { search: (world: World) => string; field: string };
  /** What the call would change; a refused call must leave it exactly as it was. */
  effect?: (world: World, call: Call) => Promise<unknown>;
  /** memberRoute's `sessionOnly`: an API token is refused (403) whoever's and for whichever workspace. */
  sessionOnly?: true;
}

async function scalar(sql: string, bind: unknown[]): Promise<unknown> {
  const rows = await db().query<{ v: unknown }>(sql, { bind, type: QueryTypes.SELECT });
  return rows[0]?.v ?? null;
}

const ws = (w: World) => ({ slug: w.workspace.slug });
const run = (w: World) => ({ ...ws(w), runId: String(w.runId) });
const memberOf = (w: World, caller: Caller) => (caller === "outsider" || caller === "signed-out" ? null : w.users[caller]);
const hex64 = () => randomBytes(32).toString("hex");
const LONG_MAPPING = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };

/** One derived crosswalk per world, from its published districts to a validated copy of them. */
const crosswalks = new WeakMap<World, Promise<number>>();
function worldCrosswalk(w: World): Promise<number> {
  let made = crosswalks.get(w);
  if (!made) {
    made = (async () => {
      const member = await authorizeMember(w.users.steward.id, w.workspace.slug, "data.curate");
      return (await deriveCrosswalkFor(member, { fromBoundaryVersionId: w.panel.boundaryVersionId, toBoundaryVersionId: await validatedBoundaries(w) })).id;
    })();
    crosswalks.set(w, made);
  }
  return made;
}

const countIn = (table: string, column = "workspace_id") => (w: World) => scalar(`SELECT count(*)::int AS v FROM ${table} WHERE ${column} = $1`, [w.workspace.id]);

// Every workspace route lives under app/api/w/[slug]/ (audit, intake, invitations and members
// moved there from app/api/workspaces/[slug]/; proxy.ts redirects their old paths for one release).
const W = "app/api/w/[slug]";
const INTAKE = `${W}/intake`;

export const WORKSPACE_ROWS: WorkspaceRow[] = [
  // ——— intake: data.curate to change, results.view (published only) to read
  {
    kind: "workspace",
    route: `${INTAKE}/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "boundary sets, panels and versions (economists and subscribers see published ones only)",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/uploads/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 201,
    does: "records a pending upload and signs a PUT URL",
    prepare: async (w) => ({ params: ws(w), body: { kind: "panel", fileName: `matrix-${unique("f")}.csv`, size: 120, sha256: hex64() } }),
    invalidBody: { body: { kind: "panel", fileName: "panel.csv", size: 0, sha256: "0".repeat(64) }, field: "size" },
    effect: countIn("uploads"),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/uploads/[uploadId]/complete/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 200,
    does: "checks size and SHA-256 of what reached S3 and marks the upload received",
    prepare: async (w) => ({ params: { ...ws(w), uploadId: await pendingUpload(w, "panel", panelCsv(w.panel, Math.random() * 1e6)) } }),
    effect: (_w, call) => scalar("SELECT state AS v FROM uploads WHERE id = $1", [call.params.uploadId]),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/uploads/[uploadId]/preview/route.ts`,
    method: "GET",
    capability: "data.curate",
    ok: 200,
    does: "header and suggested column mapping of a received upload (unpublished data)",
    prepare: async (w) => ({ params: { ...ws(w), uploadId: w.receivedPanelUpload } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/boundaries/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 202,
    does: "a new boundary version from a received upload; the worker validates it",
    prepare: async (w) => ({
      params: ws(w),
      body: { uploadId: await receivedUpload(w, "boundaries", uniqueGridGeoJson()), setName: unique("Grid"), objectName: "regions", idProperty: "code", nameProperty: "name" },
    }),
    invalidBody: { body: { uploadId: "not-an-upload", setName: "Grid", objectName: "regions", idProperty: "code" }, field: "uploadId" },
    effect: (w) => scalar("SELECT count(*)::int AS v FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id WHERE s.workspace_id = $1", [w.workspace.id]),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/panels/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 202,
    does: "a new panel version from a received upload with its column mapping; the worker validates and ingests it",
    prepare: async (w) => ({
      params: ws(w),
      body: {
        uploadId: await receivedUpload(w, "panel", panelCsv(w.panel, Math.random() * 1e6)),
        panelName: unique("Panel"),
        boundarySetId: w.boundarySetId,
        decimal: ".",
        mapping: LONG_MAPPING,
      },
    }),
    invalidBody: { body: { uploadId: "3f1c2b4e-9a8d-4c7b-8e6f-5a4b3c2d1e0f", panelName: "P", boundarySetId: -4, mapping: LONG_MAPPING }, field: "boundarySetId" },
    effect: (w) => scalar("SELECT count(*)::int AS v FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE p.workspace_id = $1", [w.workspace.id]),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/versions/[kind]/[versionId]/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "one version with its report and diff (an unpublished one does not exist for economists and subscribers)",
    prepare: async (w) => ({ params: { ...ws(w), kind: "panel", versionId: String(w.panel.panelVersionId) } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/versions/[kind]/[versionId]/route.ts`,
    method: "GET",
    variant: "an unpublished (validated) version",
    capability: "data.view-unpublished",
    refused: 404,
    ok: 200,
    does: "an unpublished version and its validation report do not exist for economists and subscribers",
    prepare: async (w) => ({ params: { ...ws(w), kind: "panel", versionId: String((await versionIn(w, "validated")).panelVersionId) } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/versions/[kind]/[versionId]/publish/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 200,
    does: "validated → published",
    prepare: async (w) => ({ params: { ...ws(w), kind: "panel", versionId: String((await versionIn(w, "validated")).panelVersionId) } }),
    effect: (_w, call) => scalar("SELECT state AS v FROM panel_versions WHERE id = $1", [Number(call.params.versionId)]),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/versions/[kind]/[versionId]/archive/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 200,
    does: "validated or published → archived",
    prepare: async (w) => ({ params: { ...ws(w), kind: "panel", versionId: String((await versionIn(w, "validated")).panelVersionId) } }),
    effect: (_w, call) => scalar("SELECT state AS v FROM panel_versions WHERE id = $1", [Number(call.params.versionId)]),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/boundaries/[versionId]/topology/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "the stored TopoJSON of published boundaries",
    prepare: async (w) => ({ params: { ...ws(w), versionId: String(w.panel.boundaryVersionId) } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/boundaries/[versionId]/topology/route.ts`,
    method: "GET",
    variant: "unpublished (validated) boundaries",
    capability: "data.view-unpublished",
    refused: 404,
    ok: 200,
    does: "unpublished boundaries do not exist for economists and subscribers",
    prepare: async (w) => ({ params: { ...ws(w), versionId: String(await validatedBoundaries(w)) } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/boundaries/[versionId]/weights/route.ts`,
    method: "GET",
    variant: "unpublished (validated) boundaries",
    capability: "data.view-unpublished",
    refused: 404,
    ok: 200,
    does: "neighbours of unpublished boundaries: they do not exist for economists and subscribers",
    prepare: async (w) => ({ params: { ...ws(w), versionId: String(await validatedBoundaries(w)) }, search: "rule=queen" }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/boundaries/[versionId]/weights/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "neighbours under a weights rule",
    prepare: async (w) => ({ params: { ...ws(w), versionId: String(w.panel.boundaryVersionId) }, search: "rule=rook" }),
    invalidQuery: { search: () => "rule=hexagon", field: "rule" },
  },
  {
    kind: "workspace",
    route: `${INTAKE}/indicators/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "indicator metadata",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/indicators/[code]/route.ts`,
    method: "PUT",
    capability: "data.curate",
    ok: 200,
    does: "creates or updates one indicator's label, unit, description, source and direction",
    prepare: async (w, caller) => ({ params: { ...ws(w), code: w.indicator }, body: { label: `Unemployment rate (set by ${caller})`, unit: "%" } }),
    invalidBody: { body: { label: "" }, field: "label" },
    effect: (w) => scalar("SELECT label AS v FROM indicators WHERE workspace_id = $1 AND code = $2", [w.workspace.id, w.indicator]),
  },

  // ——— boundary reforms (lib/reforms): stewards and managers
  {
    kind: "workspace",
    route: `${INTAKE}/crosswalks/route.ts`,
    method: "GET",
    capability: "data.view-unpublished",
    ok: 200,
    does: "the workspace's crosswalks between boundary versions",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/crosswalks/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 201,
    does: "derives an area-weighted crosswalk between two boundary versions (or stores an uploaded crosswalk CSV)",
    prepare: async (w) => ({ params: ws(w), body: { fromBoundaryVersionId: w.panel.boundaryVersionId, toBoundaryVersionId: await validatedBoundaries(w) } }),
    invalidBody: { body: { fromBoundaryVersionId: 0, toBoundaryVersionId: 1 }, field: "fromBoundaryVersionId" },
    effect: countIn("crosswalks"),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/crosswalks/[crosswalkId]/route.ts`,
    method: "GET",
    capability: "data.view-unpublished",
    ok: 200,
    does: "one crosswalk with its report and pairs",
    prepare: async (w) => ({ params: { ...ws(w), crosswalkId: String(await worldCrosswalk(w)) } }),
  },
  {
    kind: "workspace",
    route: `${INTAKE}/harmonise/defaults/route.ts`,
    method: "GET",
    capability: "data.view-unpublished",
    ok: 200,
    does: "a panel version's indicators with their default harmonisation methods",
    prepare: async (w) => ({ params: ws(w), search: `panelVersionId=${w.panel.panelVersionId}` }),
    invalidQuery: { search: () => "panelVersionId=latest", field: "panelVersionId" },
  },
  {
    kind: "workspace",
    route: `${INTAKE}/harmonise/route.ts`,
    method: "POST",
    capability: "data.curate",
    ok: 202,
    does: "harmonises a panel version through a crosswalk into a new panel version on the target boundaries",
    prepare: async (w) => ({ params: ws(w), body: { panelVersionId: w.panel.panelVersionId, crosswalkId: await worldCrosswalk(w) } }),
    invalidBody: { body: { panelVersionId: 1, crosswalkId: 1, methods: { x: { kind: "sideways" } } }, field: "methods.x.kind" },
    effect: (w) => scalar("SELECT count(*)::int AS v FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE p.workspace_id = $1 AND pv.crosswalk_id IS NOT NULL", [w.workspace.id]),
  },

  // ——— team: managers only
  {
    kind: "workspace",
    route: `${W}/members/route.ts`,
    method: "GET",
    capability: "team.manage",
    ok: 200,
    does: "members and their roles",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/members/[userId]/route.ts`,
    method: "PATCH",
    capability: "team.manage",
    ok: 200,
    does: "changes a member's role (recorded in the audit trail)",
    prepare: async (w) => ({ params: { ...ws(w), userId: String((await extraMember(w, "economist")).id) }, body: { role: "steward" } }),
    invalidBody: { body: { role: "owner" }, field: "role" },
    effect: (w, call) => scalar("SELECT role AS v FROM memberships WHERE workspace_id = $1 AND user_id = $2", [w.workspace.id, Number(call.params.userId)]),
  },
  {
    kind: "workspace",
    route: `${W}/members/[userId]/route.ts`,
    method: "DELETE",
    capability: "team.manage",
    ok: 200,
    does: "removes a member (never the last manager)",
    prepare: async (w) => ({ params: { ...ws(w), userId: String((await extraMember(w, "subscriber")).id) } }),
    effect: (w, call) => scalar("SELECT count(*)::int AS v FROM memberships WHERE workspace_id = $1 AND user_id = $2", [w.workspace.id, Number(call.params.userId)]),
  },
  {
    kind: "workspace",
    route: `${W}/invitations/route.ts`,
    method: "GET",
    capability: "team.manage",
    ok: 200,
    does: "pending invitations",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/invitations/route.ts`,
    method: "POST",
    capability: "team.manage",
    ok: 201,
    does: "invites an address with a role and queues the e-mail",
    prepare: async (w) => ({ params: ws(w), body: { email: uniqueAddress("matrix-invite"), role: "subscriber" } }),
    invalidBody: { body: { email: "not an address", role: "economist" }, field: "email" },
    effect: countIn("invitations"),
  },
  {
    kind: "workspace",
    route: `${W}/invitations/[invitationId]/route.ts`,
    method: "DELETE",
    capability: "team.manage",
    ok: 204,
    does: "withdraws a pending invitation",
    prepare: async (w) => ({ params: { ...ws(w), invitationId: String((await pendingInvitation(w)).id) } }),
    effect: (_w, call) => scalar("SELECT revoked_at AS v FROM invitations WHERE id = $1", [Number(call.params.invitationId)]),
  },
  {
    kind: "workspace",
    route: `${W}/audit/route.ts`,
    method: "GET",
    capability: "team.manage",
    ok: 200,
    does: "the audit trail",
    prepare: async (w) => ({ params: ws(w) }),
  },

  // ——— personal API tokens: any member manages their own, a manager anyone's; never with a token
  {
    kind: "workspace",
    route: `${W}/tokens/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    sessionOnly: true,
    does: "the caller's own API tokens",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/tokens/route.ts`,
    method: "POST",
    capability: "results.view",
    ok: 201,
    sessionOnly: true,
    does: "creates an API token (shown once)",
    prepare: async (w) => ({ params: ws(w), body: { name: "matrix script", role: "subscriber", expiresInDays: 7 } }),
    invalidBody: { body: { name: "", role: "subscriber", expiresInDays: 7 }, field: "name" },
    effect: countIn("api_tokens"),
  },
  {
    kind: "workspace",
    route: `${W}/tokens/[tokenId]/route.ts`,
    method: "DELETE",
    capability: "results.view",
    ok: 204,
    sessionOnly: true,
    does: "revokes one of the caller's own API tokens",
    prepare: async (w, caller) => {
      const member = memberOf(w, caller);
      const owner = member ? (caller as "manager" | "steward" | "economist" | "subscriber") : "manager";
      return { params: { ...ws(w), tokenId: (await apiTokenOf(w, owner, "subscriber", "matrix revoke")).id } };
    },
    effect: (_w, call) => scalar("SELECT revoked_at AS v FROM api_tokens WHERE id = $1", [call.params.tokenId]),
  },
  {
    kind: "workspace",
    route: `${W}/tokens/[tokenId]/route.ts`,
    method: "DELETE",
    variant: "another member's token",
    capability: "team.manage",
    refused: 404,
    ok: 204,
    sessionOnly: true,
    does: "a manager revokes any member's API token; to anyone else it does not exist",
    prepare: async (w) => {
      const owner = await extraMember(w, "economist");
      const member = await authorizeMember(owner.id, w.workspace.slug, "results.view");
      const created = await createToken(member, { name: "someone else's script", role: "economist", expiresInDays: 7 });
      return { params: { ...ws(w), tokenId: created.apiToken.id } };
    },
    effect: (_w, call) => scalar("SELECT revoked_at AS v FROM api_tokens WHERE id = $1", [call.params.tokenId]),
  },
  {
    kind: "workspace",
    route: `${W}/team-tokens/route.ts`,
    method: "GET",
    capability: "team.manage",
    ok: 200,
    sessionOnly: true,
    does: "every member's API tokens, for managers",
    prepare: async (w) => ({ params: ws(w) }),
  },

  // ——— runs: runs.manage to start, cancel, rerun and export; results.view to read
  {
    kind: "workspace",
    route: `${W}/runs/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "the run queue and history",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/runs/route.ts`,
    method: "POST",
    capability: "runs.manage",
    ok: 201,
    does: "starts a run on a published panel version (queued for the worker)",
    prepare: async (w) => ({ params: ws(w), body: { panelVersionId: w.panel.panelVersionId, indicators: [w.indicator], periods: ["2012"], permutations: 99, local: false } }),
    invalidBody: { body: { panelVersionId: 1, permutations: 10 }, field: "permutations" },
    effect: countIn("runs"),
  },
  {
    kind: "workspace",
    route: `${W}/runs/options/route.ts`,
    method: "GET",
    capability: "runs.manage",
    ok: 200,
    does: "what the start form offers (published panel versions, weights rules)",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/runs/[runId]/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "one run with its pieces",
    prepare: async (w) => ({ params: run(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/runs/[runId]/export/[kind]/route.ts`,
    method: "GET",
    capability: "runs.manage",
    ok: 200,
    does: "a run's global results, local results or weights as CSV or JSON (exporting is an economist's capability)",
    prepare: async (w) => ({ params: { ...run(w), kind: "global" }, search: "format=json" }),
    invalidQuery: { search: () => "format=xlsx", field: "format" },
  },
  {
    kind: "workspace",
    route: `${W}/runs/[runId]/cancel/route.ts`,
    method: "POST",
    capability: "runs.manage",
    ok: 200,
    does: "cancels a queued or running run",
    prepare: async (w) => ({ params: { ...ws(w), runId: String(await queuedRun(w.workspace.id, w.users.economist.id, w.panel.panelVersionId)) } }),
    effect: (_w, call) => scalar("SELECT state AS v FROM runs WHERE id = $1", [Number(call.params.runId)]),
  },
  {
    kind: "workspace",
    route: `${W}/runs/[runId]/rerun/route.ts`,
    method: "POST",
    capability: "runs.manage",
    ok: 201,
    does: "a new run with the stored parameters of a completed one",
    prepare: async (w) => ({ params: run(w) }),
    effect: countIn("runs"),
  },
  {
    kind: "workspace",
    route: `${W}/catalogue/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "one row per indicator and period",
    prepare: async (w) => ({ params: ws(w), search: `run=${w.runId}&class=clustering,not-significant` }),
    invalidQuery: { search: () => "run=latest", field: "run" },
  },
  {
    kind: "workspace",
    route: `${W}/catalogue/export/route.ts`,
    method: "GET",
    capability: "runs.manage",
    ok: 200,
    does: "the catalogue as CSV (exporting is an economist's capability)",
    prepare: async (w) => ({ params: ws(w), search: `run=${w.runId}` }),
    invalidQuery: { search: () => "class=sometimes", field: "class.0" },
  },
  {
    kind: "workspace",
    route: `${W}/desk/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "latest movements",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/timeline/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "an indicator's statistics over time",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&run=${w.runId}` }),
    invalidQuery: { search: (w) => `run=${w.runId}`, field: "indicator" },
  },
  {
    kind: "workspace",
    route: `${W}/timeline/robustness/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "Moran's I of one period under other weights rules",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&period=2013&run=${w.runId}` }),
    invalidQuery: { search: (w) => `indicator=${w.indicator}&run=${w.runId}`, field: "period" },
  },
  {
    kind: "workspace",
    route: `${W}/map/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "values and local clusters of one period",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&period=2013&run=${w.runId}` }),
    invalidQuery: { search: (w) => `indicator=${w.indicator}&period=2013&run=r${w.runId}`, field: "run" },
  },
  {
    kind: "workspace",
    route: `${W}/map/geometry/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "the projected region shapes of a run's boundaries",
    prepare: async (w) => ({ params: ws(w), search: `run=${w.runId}` }),
    invalidQuery: { search: () => "", field: "run" },
  },
  {
    kind: "workspace",
    route: `${W}/compare/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "two periods side by side with the cluster transitions",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&a=2012&b=2014&run=${w.runId}` }),
    invalidQuery: { search: (w) => `indicator=${w.indicator}&a=2012&run=${w.runId}`, field: "b" },
  },
  {
    kind: "workspace",
    route: `${W}/map/transitions/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "spatial Markov transitions of an indicator over all the run's periods",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&run=${w.runId}` }),
    invalidQuery: { search: (w) => `indicator=${w.indicator}&run=${w.runId}&classes=9`, field: "classes" },
  },
  {
    kind: "workspace",
    route: `${W}/map/rates/route.ts`,
    method: "GET",
    capability: "results.view",
    ok: 200,
    does: "raw, global and local empirical-Bayes rates of a rate indicator in one period of a run",
    prepare: async (w) => ({ params: ws(w), search: `indicator=${w.indicator}&period=2013&run=${w.runId}` }),
    invalidQuery: { search: (w) => `indicator=${w.indicator}&run=${w.runId}`, field: "period" },
  },

  // ——— digests: every member manages their own subscription; managers see the subscribers
  {
    kind: "workspace",
    route: `${W}/digests/route.ts`,
    method: "GET",
    capability: "digests.subscribe",
    ok: 200,
    does: "the caller's own subscription and delivery history",
    prepare: async (w) => ({ params: ws(w) }),
  },
  {
    kind: "workspace",
    route: `${W}/digests/route.ts`,
    method: "PUT",
    capability: "digests.subscribe",
    ok: 200,
    does: "creates or updates the caller's own subscription (never anyone else's)",
    prepare: async (w) => ({ params: ws(w), body: { cadence: "monthly", scope: "chosen", indicatorCodes: [w.indicator], threshold: "class_changes", emptyPolicy: "skip" } }),
    invalidBody: { body: { cadence: "hourly", scope: "all", threshold: "every_change", emptyPolicy: "skip" }, field: "cadence" },
    effect: countIn("digest_subscriptions"),
  },
  {
    kind: "workspace",
    route: `${W}/digests/preview/route.ts`,
    method: "GET",
    capability: "digests.subscribe",
    ok: 200,
    does: "what sending the caller's digest now would send, or why nothing would be",
    prepare: async (w, caller) => {
      const user = memberOf(w, caller);
      if (user) await subscriptionFor(w, user.id);
      return { params: ws(w) };
    },
  },
  {
    kind: "workspace",
    route: `${W}/digests/send-now/route.ts`,
    method: "POST",
    capability: "digests.subscribe",
    ok: 202,
    does: "queues the caller's own digest now, or records and answers why nothing is sent (200)",
    prepare: async (w, caller) => {
      const user = memberOf(w, caller);
      if (user) await subscriptionFor(w, user.id);
      return { params: ws(w) };
    },
  },
  {
    kind: "workspace",
    route: `${W}/digests/subscribers/route.ts`,
    method: "GET",
    capability: "team.manage",
    ok: 200,
    does: "who subscribes to what",
    prepare: async (w) => ({ params: ws(w) }),
  },
];

export { PUBLIC_ROWS };
export type { PublicRow, PublicCase } from "./route-matrix-public";

/**
 * Files with a "use server" directive (server actions). There are none today;
 * a file that gains one must be listed here with the capability its actions
 * require, and get rows exercising them, or the matrix test fails.
 */
export const SERVER_ACTION_FILES: readonly { file: string; capability: Capability; why: string }[] = [];

/** "app/api/w/[slug]/runs/route.ts" → "/api/w/[slug]/runs". */
export function urlOf(route: string): string {
  return route.replace(/^app/, "").replace(/\/route\.ts$/, "");
}

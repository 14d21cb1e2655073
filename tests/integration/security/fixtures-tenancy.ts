import { randomBytes } from "node:crypto";
import { QueryTypes } from "sequelize";
import { POST as postWorkspace } from "@/app/api/workspaces/route";
import { PUT as putIndicator } from "@/app/api/w/[slug]/intake/indicators/[code]/route";
import { POST as postInvitation } from "@/app/api/w/[slug]/invitations/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { PUT as putDigest } from "@/app/api/w/[slug]/digests/route";
import { POST as postCrosswalk } from "@/app/api/w/[slug]/intake/crosswalks/route";
import { POST as postSendNow } from "@/app/api/w/[slug]/digests/send-now/route";
import { db } from "@/lib/db";
import { models } from "@/lib/models";
import { uniqueAddress } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { makeUser } from "@/tests/integration/auth/fixtures";
import { ctx, jsonRequest } from "@/tests/integration/intake/fixtures";
import { LONG_MAPPING, publishedBoundaries, runThroughRoutes, uploadThroughRoutes, validated } from "./fixtures-intake";
import { buildWorld, MEMBER_ROLES, type World } from "./fixtures-world";

// Two workspaces for the tenancy suites (tenancy-routes.test.ts and
// tests/browser/tenancy-pages.test.ts). Workspace A is the access matrix's
// world: a member in every role, published Veldmark data, a completed run.
// Workspace B is created through POST /api/workspaces by its own manager and
// filled through the real route handlers and the worker with data whose every
// text carries one random tag (B's "distinctive strings"): boundaries, a
// published and a draft panel, indicators with labels and descriptions, a
// completed run, an invitation and a digest (both captured by the sink),
// uploads and the audit events all of that writes.
//
// Ids: before B is filled, every sequence of the public schema is moved to a
// range of its own (table i: from 1e9 + i·1e7), so every row B gets has an id no
// row of any other table — and no row of A — can have. A number under an
// id-like key of an answer is then B's exactly when it is in B's collected ids.

export type SignInAs = (user: { id: number; email: string; name: string } | null) => void;

export interface WorkspaceB {
  workspace: { id: number; slug: string; name: string };
  manager: { id: number; email: string; name: string };
  tag: string;
  runId: number;
  panelVersionId: number;
  draftPanelVersionId: number;
  boundaryVersionId: number;
  boundarySetId: number;
  /** A crosswalk derived between B's wards and a reformed copy of them. */
  crosswalkId: number;
  uploadIds: string[];
  invitationId: number;
  /** A personal API token of B's manager in B (made through POST …/tokens), and its row id. */
  token: string;
  tokenId: string;
  indicatorCodes: string[];
  /** Texts that exist only in B: a leak is any of these in something A's members receive. */
  strings: string[];
  /** B's row ids per table (uploads: uuids), collected after B was filled. */
  ids: Record<string, Set<string>>;
  /** Captured mail sent for B (invitation, digest). */
  mailIds: number[];
}

export interface TenancyWorld {
  a: World;
  b: WorkspaceB;
}

const SEQUENCE_BASE = 1_000_000_000;
const SEQUENCE_STRIDE = 10_000_000;

/** Moves every public sequence into a range of its own (see the header); idempotent across calls. */
export async function separateIdRanges(): Promise<void> {
  const sequences = await db().query<{ name: string; last: string | null }>(
    "SELECT sequencename AS name, last_value::text AS last FROM pg_sequences WHERE schemaname = 'public' ORDER BY sequencename",
    { type: QueryTypes.SELECT },
  );
  for (const [i, s] of sequences.entries()) {
    const base = SEQUENCE_BASE + (i + 1) * SEQUENCE_STRIDE;
    const next = Math.max(base, Number(s.last ?? 0) + 1_000);
    if (next >= base + SEQUENCE_STRIDE) throw new Error(`sequence ${s.name} has run past its tenancy range (${s.last})`);
    await db().query(`SELECT setval('public.${s.name.replace(/[^a-z0-9_]/g, "")}', ${next}, false)`);
  }
}

async function expectStatus(response: Response, status: number, what: string): Promise<Record<string, unknown>> {
  const text = await response.text();
  if (response.status !== status) throw new Error(`${what}: expected ${status}, got ${response.status}: ${text.slice(0, 400)}`);
  return text ? (JSON.parse(text) as Record<string, unknown>) : {};
}

/** A 4 × 4 grid of squares whose codes and names carry `tag`. */
function taggedGrid(tag: string): string {
  const features = [];
  for (let row = 0; row < 4; row++) {
    for (let col = 0; col < 4; col++) {
      const n = row * 4 + col + 1;
      const x = col * 10 + 700;
      const y = row * 10 + 700;
      features.push({
        type: "Feature",
        properties: { code: `ZR${tag}${n}`, name: `Zephyr ward ${tag} ${n}` },
        geometry: { type: "Polygon", coordinates: [[[x, y], [x + 10, y], [x + 10, y + 10], [x, y + 10], [x, y]]] },
      });
    }
  }
  return JSON.stringify({ type: "FeatureCollection", features });
}

function taggedPanel(tag: string, indicators: string[], years: number[]): string {
  const lines = ["region,period,indicator,value"];
  for (const [k, indicator] of indicators.entries()) {
    for (const year of years) {
      // Clustered along the rows, so the run finds something to report.
      for (let n = 1; n <= 16; n++) lines.push(`ZR${tag}${n},${year},${indicator},${(Math.floor((n - 1) / 4) * 3 + ((n * 7 + year + k) % 5) / 10).toFixed(2)}`);
    }
  }
  return `${lines.join("\n")}\n`;
}

async function idsOf(sql: string, bind: unknown[]): Promise<Set<string>> {
  const rows = await db().query<{ id: string | number }>(sql, { bind, type: QueryTypes.SELECT });
  return new Set(rows.map((r) => String(r.id)));
}

/** Every row of B, per table (joins for tables without workspace_id). */
async function collectIds(workspaceId: number): Promise<Record<string, Set<string>>> {
  const direct = await db().query<{ table_name: string }>(
    "SELECT table_name FROM information_schema.columns WHERE table_schema = 'public' AND column_name = 'workspace_id' ORDER BY table_name",
    { type: QueryTypes.SELECT },
  );
  const ids: Record<string, Set<string>> = {};
  for (const { table_name: table } of direct) ids[table] = await idsOf(`SELECT id FROM "${table}" WHERE workspace_id = $1`, [workspaceId]);
  ids.workspaces = new Set([String(workspaceId)]);
  ids.users = await idsOf("SELECT user_id AS id FROM memberships WHERE workspace_id = $1", [workspaceId]);
  ids.boundary_versions = await idsOf("SELECT v.id FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id WHERE s.workspace_id = $1", [workspaceId]);
  ids.regions = await idsOf(
    "SELECT r.id FROM regions r JOIN boundary_versions v ON v.id = r.boundary_version_id JOIN boundary_sets s ON s.id = v.boundary_set_id WHERE s.workspace_id = $1",
    [workspaceId],
  );
  ids.panel_versions = await idsOf("SELECT v.id FROM panel_versions v JOIN panels p ON p.id = v.panel_id WHERE p.workspace_id = $1", [workspaceId]);
  ids.run_pieces = await idsOf("SELECT p.id FROM run_pieces p JOIN runs r ON r.id = p.run_id WHERE r.workspace_id = $1", [workspaceId]);
  ids.run_results = await idsOf("SELECT x.id FROM run_results x JOIN runs r ON r.id = x.run_id WHERE r.workspace_id = $1", [workspaceId]);
  ids.digest_deliveries = await idsOf("SELECT d.id FROM digest_deliveries d JOIN digest_subscriptions s ON s.id = d.subscription_id WHERE s.workspace_id = $1", [workspaceId]);
  return ids;
}

/** Every URL's path and query in B's captured mail (invitation and unsubscribe tokens), as distinctive strings. */
function linkSecrets(texts: (string | null)[]): string[] {
  const found = new Set<string>();
  for (const text of texts) {
    for (const match of (text ?? "").matchAll(/https?:\/\/[^\s"'<>]+/g)) {
      const url = new URL(match[0].replace(/&amp;/g, "&"));
      for (const value of url.searchParams.values()) if (value.length >= 16) found.add(value);
      const last = url.pathname.split("/").at(-1) ?? "";
      if (last.length >= 16) found.add(last);
    }
  }
  return [...found];
}

/** Builds A (buildWorld) and B (see the header). `signInAs` stands in for the session of in-process route calls. */
export async function buildTenancyWorld(signInAs: SignInAs): Promise<TenancyWorld> {
  const a = await buildWorld();
  await separateIdRanges();

  const tag = `zq${randomBytes(4).toString("hex")}`;
  const managerRow = await makeUser(`zephyr-${tag}`);
  await managerRow.update({ name: `Zephyr Keeper ${tag}` });
  const manager = { id: managerRow.id, email: managerRow.email, name: managerRow.name };
  signInAs(manager);

  const created = await expectStatus(
    await postWorkspace(jsonRequest("POST", { name: `Zephyr Basin Office ${tag}`, slug: `zephyr-${tag}` })),
    201,
    "creating workspace B through POST /api/workspaces",
  );
  const slug = String(created.slug);
  const workspace = await models().Workspace.findOne({ where: { slug } });
  if (!workspace) throw new Error(`workspace B (${slug}) was not stored`);

  const indicatorCodes = [`zeph_${tag}_rate`, `zeph_${tag}_income`];
  const draftCode = `zeph_${tag}_draft`;
  const years = [2019, 2020, 2021];
  const boundaries = await publishedBoundaries(slug, taggedGrid(tag), `Zephyr wards ${tag}`, `zephyr-wards-${tag}.geojson`);

  // A reform of B's wards (the same cells under new codes, so not the same file) and the crosswalk derived between them.
  const reformed = await publishedBoundaries(slug, taggedGrid(`${tag}r`), `Zephyr wards reformed ${tag}`, `zephyr-wards-reformed-${tag}.geojson`);
  const crosswalk = await expectStatus(
    await postCrosswalk(jsonRequest("POST", { fromBoundaryVersionId: boundaries.id, toBoundaryVersionId: reformed.id }), ctx({ slug })),
    201,
    "B's derived crosswalk",
  );
  const crosswalkId = Number(crosswalk.id);

  const panelUpload = await uploadThroughRoutes(slug, "panel", `zephyr-panel-${tag}.csv`, taggedPanel(tag, indicatorCodes, years));
  const panel = await expectStatus(
    await postPanels(jsonRequest("POST", { uploadId: panelUpload, panelName: `Zephyr indicators ${tag}`, boundarySetId: boundaries.setId, decimal: ".", mapping: LONG_MAPPING }), ctx({ slug })),
    202,
    "B's panel version",
  );
  const panelVersionId = Number(panel.id);
  await validated("panel", panelVersionId);
  const { POST: postPublish } = await import("@/app/api/w/[slug]/intake/versions/[kind]/[versionId]/publish/route");
  await expectStatus(await postPublish(jsonRequest("POST"), ctx({ slug, kind: "panel", versionId: String(panelVersionId) })), 200, "publishing B's panel");

  // A draft (validated, never published) panel with an indicator of its own.
  const draftUpload = await uploadThroughRoutes(slug, "panel", `zephyr-draft-${tag}.csv`, taggedPanel(tag, [draftCode], [2021]));
  const draft = await expectStatus(
    await postPanels(jsonRequest("POST", { uploadId: draftUpload, panelName: `Zephyr draft ${tag}`, boundarySetId: boundaries.setId, decimal: ".", mapping: LONG_MAPPING }), ctx({ slug })),
    202,
    "B's draft panel version",
  );
  await validated("panel", Number(draft.id));
  // An upload received but never used for a version.
  const idleUpload = await uploadThroughRoutes(slug, "panel", `zephyr-idle-${tag}.csv`, taggedPanel(tag, indicatorCodes, [2018]));

  for (const [i, code] of [...indicatorCodes, draftCode].entries()) {
    await expectStatus(
      await putIndicator(
        jsonRequest("PUT", { label: `Zephyr measure ${tag} ${i}`, unit: `zu${tag}`, description: `Zephyr confidential description ${tag} ${i}`, source: `Zephyr source ${tag}` }),
        ctx({ slug, code }),
      ),
      200,
      `B's indicator ${code}`,
    );
  }

  const run = await runThroughRoutes(slug, { panelVersionId, indicators: indicatorCodes, periods: years.map(String), permutations: 99, local: true, seed: 11 });
  if (run.state !== "completed") throw new Error(`B's run ${run.runId} ended ${run.state}`);

  const invitee = uniqueAddress(`zephyr-invitee-${tag}`);
  const invited = await expectStatus(await postInvitation(jsonRequest("POST", { email: invitee, role: "economist" }), ctx({ slug })), 201, "B's invitation");
  const invitationId = Number((invited.invitation as { id: number }).id);
  await expectStatus(
    await putDigest(jsonRequest("PUT", { cadence: "weekly", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "say_so" }), ctx({ slug })),
    200,
    "B manager's digest subscription",
  );
  await expectStatus(await postSendNow(jsonRequest("POST"), ctx({ slug })), 202, "B manager's digest, sent now");
  const { POST: postToken } = await import("@/app/api/w/[slug]/tokens/route");
  const madeToken = await expectStatus(await postToken(jsonRequest("POST", { name: `Zephyr token ${tag}`, role: "manager", expiresInDays: 30 }), ctx({ slug })), 201, "B manager's API token");
  const token = String(madeToken.token);
  const tokenId = String((madeToken.apiToken as { id: string }).id);
  // A use from an address, so B's token row has a last address and B's trail a use event.
  const { GET: getRuns } = await import("@/app/api/w/[slug]/runs/route");
  signInAs(null);
  const used = new Request(`http://tessera.test/api/w/${slug}/runs`, { headers: { authorization: `Bearer ${token}`, "x-forwarded-for": "192.0.2.77" } });
  await expectStatus(await getRuns(used, ctx({ slug })), 200, "B's token used on B");
  signInAs(manager);
  const invitationMail = await waitForMailTo(invitee, { subjectContains: tag, timeoutMs: 60_000 });
  const digestMail = await waitForMailTo(manager.email, { timeoutMs: 60_000 });
  signInAs(null);

  const ids = await collectIds(workspace.id);
  const uploadIds = [...(ids.uploads ?? [])];
  const strings = [
    tag,
    slug,
    workspace.name,
    manager.email,
    manager.name,
    invitee,
    `Zephyr wards ${tag}`,
    `Zephyr indicators ${tag}`,
    `Zephyr draft ${tag}`,
    `zephyr-wards-${tag}.geojson`,
    `Zephyr wards reformed ${tag}`,
    `zephyr-wards-reformed-${tag}.geojson`,
    `zephyr-panel-${tag}.csv`,
    `zephyr-draft-${tag}.csv`,
    `zephyr-idle-${tag}.csv`,
    ...indicatorCodes,
    draftCode,
    `Zephyr confidential description ${tag}`,
    `Zephyr measure ${tag}`,
    `ZR${tag}`,
    `Zephyr ward ${tag}`,
    `Zephyr token ${tag}`,
    token,
    tokenId,
    "192.0.2.77",
    ...uploadIds,
    ...linkSecrets([invitationMail.text, invitationMail.html, digestMail.text, digestMail.html]),
  ];
  return {
    a,
    b: {
      workspace: { id: workspace.id, slug, name: workspace.name },
      manager,
      tag,
      runId: run.runId,
      panelVersionId,
      draftPanelVersionId: Number(draft.id),
      boundaryVersionId: boundaries.id,
      boundarySetId: boundaries.setId,
      crosswalkId,
      uploadIds: [panelUpload, draftUpload, idleUpload, boundaries.uploadId, reformed.uploadId],
      invitationId,
      token,
      tokenId,
      indicatorCodes,
      strings,
      ids,
      mailIds: [invitationMail.id, digestMail.id],
    },
  };
}

const ID_KEY = /(^id$|Id$|_id$|Ids$|_ids$|^ids$)/;

/** Where `body` (text of an answer, a page, a CSV or a mail) shows anything of B: its strings, or (JSON) B's row ids under id-like keys. */
export function leaksOf(body: string, b: Pick<WorkspaceB, "strings" | "ids">): string[] {
  const found: string[] = [];
  const lower = body.toLowerCase();
  for (const s of b.strings) if (lower.includes(s.toLowerCase())) found.push(`text "${s}"`);
  let json: unknown;
  try {
    json = JSON.parse(body);
  } catch {
    return found;
  }
  const allIds = new Map<string, string>();
  for (const [table, set] of Object.entries(b.ids)) for (const id of set) allIds.set(id, table);
  const visit = (value: unknown, key: string | null, path: string): void => {
    if (Array.isArray(value)) {
      value.forEach((v, i) => visit(v, key, `${path}[${i}]`));
      return;
    }
    if (value !== null && typeof value === "object") {
      const record = value as Record<string, unknown>;
      // Field-ordered tuples (lib/runs/catalogue-wire.ts): each position is keyed by its field's name.
      const fields = Array.isArray(record.fields) && record.fields.every((f) => typeof f === "string") ? (record.fields as string[]) : null;
      for (const [k, v] of Object.entries(record)) {
        if (fields && k === "rows" && Array.isArray(v)) {
          v.forEach((row, i) => (Array.isArray(row) ? row.forEach((cell, j) => visit(cell, fields[j] ?? null, `${path}.rows[${i}].${fields[j] ?? j}`)) : visit(row, k, `${path}.rows[${i}]`)));
        } else visit(v, k, path ? `${path}.${k}` : k);
      }
      return;
    }
    if (key !== null && ID_KEY.test(key) && (typeof value === "number" || typeof value === "string")) {
      const table = allIds.get(String(value));
      if (table) found.push(`${path} = ${String(value)} (a row of B's ${table})`);
    }
  };
  visit(json, null, "");
  return found;
}

export { MEMBER_ROLES };

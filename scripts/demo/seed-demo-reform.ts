// The invented 2019 district reform of Veldmark in the demo workspace, after
// scripts/demo/seed-demo-data.ts and the demo run: the reformed districts
// (scripts/demo/veldmark/reform.ts: three merges, one split) as a boundary set
// of their own, the area-weighted crosswalk from the published districts, the
// figures observed on the reformed districts from 2019 (version 1 of a panel
// on them, made by continuationPanel from the demo panel file), and the demo
// panel harmonised through the crosswalk with that continuation as version 2:
// 2008–2018 carried across the reform, 2019–2024 as observed. The demo panel
// and the demo run stay as they are (the new panel's name sorts after the demo
// panel's, so the demo run script keeps finding the demo panel first).
//
//   npx tsx scripts/demo/seed-demo-reform.ts
//
// Idempotent: does nothing once the harmonised panel has a published version;
// resumes a half-finished earlier run.
import fs from "node:fs";
import path from "node:path";
import { createHash } from "node:crypto";
import { QueryTypes } from "sequelize";
import type { MemberContext } from "@/lib/auth/guard";
import { db } from "@/lib/db";
import { createBoundaryVersion, createPanelVersion, publishVersion } from "@/lib/intake/service";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";
import { deriveCrosswalkFor, harmonisePanel } from "@/lib/reforms/service";
import { DEMO_PANEL, demoStewardContext, ROOT, runSeedScript, uploadLikeTheBrowser } from "./demo-intake";
import { buildReform, continuationPanel, REFORM_BOUNDARY_SET, REFORM_PANEL, REFORM_YEAR } from "./veldmark/reform";

const BASE = path.join(ROOT, "seeders", "data", "veldmark", "veldmark.topojson");
const DEMO_PANEL_FILE = path.join(ROOT, "seeders", "data", "veldmark", "veldmark-panel.csv");

const log = (message: string) => console.log(`[seed-demo-reform] ${message}`);

async function one<T extends object>(sql: string, replacements: Record<string, unknown>): Promise<T | null> {
  const rows = await db().query<T>(sql, { replacements, type: QueryTypes.SELECT });
  return rows[0] ?? null;
}

/** Validates (in process) and publishes a panel version left uploaded or validated. */
async function validateAndPublish(member: MemberContext, version: { id: number; state: string }, what: string): Promise<void> {
  if (version.state === "uploaded") {
    const outcome = await ingestPanelVersion(version.id);
    if (outcome.state === "rejected") throw new Error(`${what} was rejected: ${JSON.stringify(outcome.report.errors.slice(0, 5))}`);
    version.state = "validated";
  }
  if (version.state === "validated") await publishVersion(member, "panel", version.id);
}

async function main(): Promise<void> {
  const member = await demoStewardContext();
  const workspaceId = member.workspace.id;
  const done = await one<{ id: number }>(
    `SELECT pv.id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND p.name = :name AND pv.state = 'published' AND pv.crosswalk_id IS NOT NULL
        AND pv.harmonisation ? 'continuationPanelVersionId' LIMIT 1`,
    { workspaceId, name: REFORM_PANEL },
  );
  if (done) {
    log("the harmonised demo panel is already published; nothing to do");
    return;
  }
  const source = await one<{ id: number; boundary_version_id: number }>(
    `SELECT pv.id, pv.boundary_version_id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND p.name = :name AND pv.state = 'published' ORDER BY pv.version DESC LIMIT 1`,
    { workspaceId, name: DEMO_PANEL },
  );
  if (!source) throw new Error(`the demo panel '${DEMO_PANEL}' has no published version; run scripts/demo/seed-demo-data.ts first`);

  // 1. The reformed districts, uploaded as the browser does.
  const reform = buildReform(JSON.parse(fs.readFileSync(BASE, "utf8")));
  const bytes = Buffer.from(`${JSON.stringify(reform.topology)}\n`, "utf8");
  const sha256 = createHash("sha256").update(bytes).digest("hex");
  let boundary = await one<{ id: number; state: string }>(
    `SELECT bv.id, bv.state FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id
      WHERE s.workspace_id = :workspaceId AND s.name = :name AND bv.sha256 = :sha256 AND bv.state <> 'rejected' ORDER BY bv.version DESC LIMIT 1`,
    { workspaceId, name: REFORM_BOUNDARY_SET, sha256 },
  );
  if (!boundary) {
    const uploadId = (await uploadLikeTheBrowser(member, "boundaries", "veldmark-districts-2019.topojson", bytes)).uploadId;
    const created = await createBoundaryVersion(
      member,
      { uploadId, setName: REFORM_BOUNDARY_SET, objectName: "districts", idProperty: "code", nameProperty: "name" },
      { enqueueJob: false },
    );
    boundary = { id: created.id, state: "uploaded" };
  }
  if (boundary.state === "uploaded") {
    const outcome = await ingestBoundaryVersion(boundary.id);
    if (outcome.state === "rejected") throw new Error(`the reform boundaries were rejected: ${outcome.report.errors.map((e) => e.message).join("; ")}`);
    boundary.state = "validated";
  }
  if (boundary.state === "validated") await publishVersion(member, "boundaries", boundary.id);
  log(`reformed districts published (boundary version ${boundary.id})`);

  // 2. The area-weighted crosswalk from the demo districts.
  const existing = await one<{ id: number }>(
    "SELECT id FROM crosswalks WHERE workspace_id = :workspaceId AND from_boundary_version_id = :from AND to_boundary_version_id = :to AND origin = 'derived' AND status = 'ready' ORDER BY id LIMIT 1",
    { workspaceId, from: source.boundary_version_id, to: boundary.id },
  );
  const crosswalkId = existing?.id ?? (await deriveCrosswalkFor(member, { fromBoundaryVersionId: source.boundary_version_id, toBoundaryVersionId: boundary.id })).id;
  log(`crosswalk ${crosswalkId} derived`);

  // 3. The figures observed on the reformed districts from 2019: version 1 of the panel on them.
  const observedBytes = Buffer.from(continuationPanel(fs.readFileSync(DEMO_PANEL_FILE, "utf8"), reform), "utf8");
  const observedSha = createHash("sha256").update(observedBytes).digest("hex");
  let continuation = await one<{ id: number; state: string }>(
    `SELECT pv.id, pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND p.name = :name AND pv.sha256 = :sha256 AND pv.crosswalk_id IS NULL AND pv.state <> 'rejected' ORDER BY pv.version DESC LIMIT 1`,
    { workspaceId, name: REFORM_PANEL, sha256: observedSha },
  );
  if (!continuation) {
    const uploadId = (await uploadLikeTheBrowser(member, "panel", `veldmark-districts-2019-observed-${REFORM_YEAR}-on.csv`, observedBytes)).uploadId;
    const set = await one<{ boundary_set_id: number }>("SELECT boundary_set_id FROM boundary_versions WHERE id = :id", { id: boundary.id });
    const created = await createPanelVersion(
      member,
      {
        uploadId,
        panelName: REFORM_PANEL,
        boundarySetId: set?.boundary_set_id,
        boundaryVersionId: boundary.id,
        decimal: ".",
        mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
        remember: false,
      },
      { enqueueJob: false },
    );
    continuation = { id: created.id, state: "uploaded" };
  }
  await validateAndPublish(member, continuation, "the figures observed on the reformed districts");
  log(`figures observed from ${REFORM_YEAR} published (panel version ${continuation.id})`);

  // 4. The demo panel harmonised onto them (default methods) with that continuation, validated and published.
  let version = await one<{ id: number; state: string }>(
    `SELECT pv.id, pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND p.name = :name AND pv.crosswalk_id = :crosswalkId AND pv.state <> 'rejected'
        AND (pv.harmonisation->>'continuationPanelVersionId')::int = :continuationId ORDER BY pv.version DESC LIMIT 1`,
    { workspaceId, name: REFORM_PANEL, crosswalkId, continuationId: continuation.id },
  );
  if (!version) {
    const made = await harmonisePanel(
      member,
      { panelVersionId: source.id, crosswalkId, panelName: REFORM_PANEL, continuationPanelVersionId: continuation.id },
      { enqueueJob: false },
    );
    version = { id: made.id, state: "uploaded" };
  }
  await validateAndPublish(member, version, "the harmonised demo panel");
  log(`harmonised panel published (panel version ${version.id})`);
}

runSeedScript("seed-demo-reform", main);

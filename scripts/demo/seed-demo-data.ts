// Brings the invented Veldmark boundaries and panel (seeders/data/veldmark/,
// written by scripts/demo/generate-veldmark.ts) into the demo workspace through
// the same path a steward uses in the browser: a presigned PUT to S3, the
// size and SHA-256 check, a new version, validation and COPY ingest, publish.
// Then the indicator metadata from indicators.json.
//
//   npx tsx scripts/demo/seed-demo-data.ts
//
// Idempotent: does nothing when the demo panel already has a published
// version; resumes a half-finished earlier run (a version left uploaded or
// validated) instead of uploading again. Needs DATABASE_URL and S3_* (as
// `npm start` / `npm test` export them) and the demo accounts seeded.
import fs from "node:fs";
import path from "node:path";
import { createHash } from "node:crypto";
import { QueryTypes } from "sequelize";
import { z } from "zod";
import type { MemberContext } from "@/lib/auth/guard";
import { db } from "@/lib/db";
import { createBoundaryVersion, createPanelVersion, publishVersion, saveIndicator, indicatorPatchSchema } from "@/lib/intake/service";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";
import { DEMO_BOUNDARY_SET, DEMO_PANEL, demoStewardContext, ROOT, runSeedScript, uploadLikeTheBrowser } from "./demo-intake";

const DATA = path.join(ROOT, "seeders", "data", "veldmark");
const BOUNDARY_FILE = "veldmark.topojson";
const PANEL_FILE = "veldmark-panel.csv";

const log = (message: string) => console.log(`[seed-demo-data] ${message}`);

const indicatorFileSchema = z.array(indicatorPatchSchema.extend({ code: z.string().min(1) }));

/** Uploads a file of the demo data as the browser would. */
async function uploadFile(member: MemberContext, kind: "boundaries" | "panel", file: string): Promise<string> {
  const bytes = fs.readFileSync(file);
  const { uploadId, sha256 } = await uploadLikeTheBrowser(member, kind, path.basename(file), bytes);
  log(`uploaded ${path.basename(file)} (${bytes.length.toLocaleString("en")} bytes, sha256 ${sha256.slice(0, 12)}…)`);
  return uploadId;
}

function fileSha(file: string): string {
  return createHash("sha256").update(fs.readFileSync(file)).digest("hex");
}

interface ExistingVersion {
  id: number;
  version: number;
  state: string;
}

async function existingBoundaryVersion(workspaceId: number, sha256: string): Promise<ExistingVersion | null> {
  const rows = await db().query<ExistingVersion>(
    `SELECT bv.id, bv.version, bv.state FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id
      WHERE s.workspace_id = :workspaceId AND s.name = :name AND bv.sha256 = :sha256 AND bv.state <> 'rejected'
      ORDER BY bv.version DESC LIMIT 1`,
    { replacements: { workspaceId, name: DEMO_BOUNDARY_SET, sha256 }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

async function existingPanelVersion(workspaceId: number, sha256: string | null): Promise<ExistingVersion | null> {
  const rows = await db().query<ExistingVersion>(
    `SELECT pv.id, pv.version, pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND p.name = :name AND pv.state <> 'rejected'
        ${sha256 ? "AND pv.sha256 = :sha256" : "AND pv.state = 'published'"}
      ORDER BY pv.version DESC LIMIT 1`,
    { replacements: { workspaceId, name: DEMO_PANEL, sha256 }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

async function seedBoundaries(member: MemberContext): Promise<number> {
  const file = path.join(DATA, BOUNDARY_FILE);
  let version = await existingBoundaryVersion(member.workspace.id, fileSha(file));
  if (!version) {
    const uploadId = await uploadFile(member, "boundaries", file);
    const created = await createBoundaryVersion(
      member,
      { uploadId, setName: DEMO_BOUNDARY_SET, objectName: "districts", idProperty: "code", nameProperty: "name" },
      { enqueueJob: false },
    );
    version = { id: created.id, version: created.version, state: "uploaded" };
  }
  if (version.state === "uploaded") {
    const outcome = await ingestBoundaryVersion(version.id);
    if (outcome.state === "rejected") throw new Error(`the demo boundaries were rejected: ${outcome.report.errors.map((e) => e.message).join("; ")}`);
    version.state = "validated";
    log(`boundaries v${version.version} validated`);
  }
  if (version.state === "validated") {
    await publishVersion(member, "boundaries", version.id);
    log(`boundaries v${version.version} published`);
  }
  return version.id;
}

async function seedPanel(member: MemberContext, boundaryVersionId: number): Promise<void> {
  const file = path.join(DATA, PANEL_FILE);
  let version = await existingPanelVersion(member.workspace.id, fileSha(file));
  if (!version) {
    const uploadId = await uploadFile(member, "panel", file);
    const setRows = await db().query<{ boundary_set_id: number }>("SELECT boundary_set_id FROM boundary_versions WHERE id = :id", {
      replacements: { id: boundaryVersionId },
      type: QueryTypes.SELECT,
    });
    const created = await createPanelVersion(
      member,
      {
        uploadId,
        panelName: DEMO_PANEL,
        boundarySetId: setRows[0]?.boundary_set_id,
        boundaryVersionId,
        decimal: ".",
        mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
        remember: true,
      },
      { enqueueJob: false },
    );
    version = { id: created.id, version: created.version, state: "uploaded" };
  }
  if (version.state === "uploaded") {
    const started = Date.now();
    const outcome = await ingestPanelVersion(version.id);
    if (outcome.state === "rejected") throw new Error(`the demo panel was rejected: ${JSON.stringify(outcome.report.errors.slice(0, 5))}`);
    if (outcome.state === "validated") log(`panel v${version.version} validated: ${outcome.observations.toLocaleString("en")} observations in ${Date.now() - started} ms`);
    version.state = "validated";
  }
  if (version.state === "validated") {
    await publishVersion(member, "panel", version.id);
    log(`panel v${version.version} published`);
  }
}

async function seedIndicators(member: MemberContext): Promise<void> {
  const indicators = indicatorFileSchema.parse(JSON.parse(fs.readFileSync(path.join(DATA, "indicators.json"), "utf8")));
  for (const { code, ...patch } of indicators) await saveIndicator(member, code, patch);
  log(`indicator metadata for ${indicators.length} indicators`);
}

async function main(): Promise<void> {
  const member = await demoStewardContext();
  const published = await existingPanelVersion(member.workspace.id, null);
  if (published) {
    log(`demo panel already published (v${published.version}); nothing to do`);
    return;
  }
  const boundaryVersionId = await seedBoundaries(member);
  await seedPanel(member, boundaryVersionId);
  await seedIndicators(member);
  log("done");
}

runSeedScript("seed-demo-data", main);

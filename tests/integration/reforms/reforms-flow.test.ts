import { createHash } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { Topology } from "topojson-specification";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { buildWorld, memberOf, type World } from "@/tests/integration/security/fixtures-world";
import { authorizeMember } from "@/lib/auth/guard";
import { db } from "@/lib/db";
import { completeUpload, createBoundaryVersion, createPanelVersion, createUpload, publishVersion } from "@/lib/intake/service";
import { versionDetail } from "@/lib/intake/queries";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";
import { putObject } from "@/lib/storage/s3";
import { createUploadedCrosswalk, deriveCrosswalkFor, getCrosswalk, harmonisePanel } from "@/lib/reforms/service";
import { buildReform } from "@/scripts/demo/veldmark/reform";

const DATA = path.join(__dirname, "..", "..", "..", "seeders", "data", "veldmark");
let world: World;
let reformVersionId: number;

async function upload(kind: "boundaries" | "crosswalk" | "panel", fileName: string, content: string): Promise<string> {
  const member = await memberOf(world, "steward");
  const ticket = await createUpload(member, { kind, fileName, size: Buffer.byteLength(content), sha256: createHash("sha256").update(content).digest("hex") });
  const row = await db().query<{ s3_key: string }>("SELECT s3_key FROM uploads WHERE id = $1", { bind: [ticket.uploadId], type: QueryTypes.SELECT });
  await putObject(row[0].s3_key, content, ticket.contentType);
  expect((await completeUpload(member, ticket.uploadId)).state).toBe("received");
  return ticket.uploadId;
}

beforeAll(async () => {
  await requireTestServices();
  world = await buildWorld();
  const steward = await memberOf(world, "steward");
  const reform = buildReform(JSON.parse(readFileSync(path.join(DATA, "veldmark.topojson"), "utf8")) as Topology);
  const uploadId = await upload("boundaries", `reform-${Date.now()}.topojson`, JSON.stringify(reform.topology));
  const created = await createBoundaryVersion(steward, { uploadId, setName: `Reformed districts ${Date.now()}`, objectName: "districts", idProperty: "code", nameProperty: "name" }, { enqueueJob: false });
  expect((await ingestBoundaryVersion(created.id)).state).toBe("validated");
  await publishVersion(steward, "boundaries", created.id);
  reformVersionId = created.id;
}, 120_000);

afterAll(closeConnections);

describe("boundary reforms", () => {
  it("derives the crosswalk between the demo districts and their reform: three merges, one split", async () => {
    const steward = await authorizeMember(world.users.steward.id, world.workspace.slug, "data.curate");
    const { id } = await deriveCrosswalkFor(steward, { fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    const detail = await getCrosswalk(steward, id);
    expect(detail.status).toBe("ready");
    expect(detail.report?.summary.merged.map((m) => m.to)).toEqual(["VM-M01", "VM-M02", "VM-M03"]);
    expect(detail.report?.summary.split).toEqual([{ from: "VM-200", to: ["VM-200E", "VM-200W"] }]);
    // Every source district lands whole somewhere: its shares sum to 1 (areas of the same polygons, cut or joined;
    // the split line's points are rounded to the metre, hence 4 decimals).
    const sums = new Map<string, number>();
    for (const p of detail.pairs) sums.set(p.from, (sums.get(p.from) ?? 0) + p.share);
    expect(sums.size).toBe(world.panel.regions.length);
    for (const [, sum] of sums) expect(sum).toBeCloseTo(1, 4);
    const audit = await db().query<{ action: string }>("SELECT action FROM audit_events WHERE workspace_id = $1 AND action = 'crosswalk.created'", { bind: [world.workspace.id], type: QueryTypes.SELECT });
    expect(audit.length).toBeGreaterThan(0);
  }, 60_000);

  it("rejects an uploaded crosswalk CSV with errors, naming line and code", async () => {
    const steward = await authorizeMember(world.users.steward.id, world.workspace.slug, "data.curate");
    const uploadId = await upload("crosswalk", "crosswalk.csv", `from,to,share\nVM-001,VM-001,1\nVM-200,VM-200W,0.6\nVM-200,VM-200E,0.6\nVM-999,VM-002,1\n`);
    const result = await createUploadedCrosswalk(steward, { uploadId, fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    expect(result.status).toBe("rejected");
    const errors = result.report.issues.filter((i) => i.severity === "error").map((i) => [i.code, i.line]);
    expect(errors).toEqual([
      ["unknown-from", 5],
      ["shares-sum", 3],
    ]);
  }, 60_000);

  it("harmonises the panel into a new version that validates, keeps its provenance and publishes", async () => {
    const steward = await authorizeMember(world.users.steward.id, world.workspace.slug, "data.curate");
    const pairs = ["from,to,share"];
    const { id: derivedId } = await deriveCrosswalkFor(steward, { fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    for (const p of (await getCrosswalk(steward, derivedId)).pairs) pairs.push(`${p.from},${p.to},${p.share}`);
    const uploadId = await upload("crosswalk", "population-shares.csv", `${pairs.join("\n")}\n`);
    const uploaded = await createUploadedCrosswalk(steward, { uploadId, fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    expect(uploaded.status).toBe("ready");
    const made = await harmonisePanel(steward, { panelVersionId: world.panel.panelVersionId, crosswalkId: uploaded.id, panelName: `Harmonised ${Date.now()}` }, { enqueueJob: false });
    expect(made.provenance.methods).toEqual({ broadband_coverage: { kind: "intensive" }, unemployment_rate: { kind: "intensive" } });
    expect(made.provenance.carriedPeriods).toEqual(world.periods);
    const outcome = await ingestPanelVersion(made.id);
    expect(outcome.state).toBe("validated");
    await publishVersion(steward, "panel", made.id);
    const rows = await db().query<{ region_code: string; value: number }>(
      "SELECT region_code, value FROM observations WHERE panel_version_id = $1 AND indicator_code = 'unemployment_rate' AND period_key = '2013' AND region_code IN ('VM-M01', 'VM-001')",
      { bind: [made.id], type: QueryTypes.SELECT },
    );
    const source = await db().query<{ region_code: string; value: number }>(
      "SELECT region_code, value FROM observations WHERE panel_version_id = $1 AND indicator_code = 'unemployment_rate' AND period_key = '2013' AND region_code IN ('VM-001', 'VM-033', 'VM-040')",
      { bind: [world.panel.panelVersionId], type: QueryTypes.SELECT },
    );
    const value = (list: typeof rows, code: string) => Number(list.find((r) => r.region_code === code)?.value);
    // An unchanged district keeps its value; a merged one lies between its two sources (an area-weighted mean).
    expect(value(rows, "VM-001")).toBeCloseTo(value(source, "VM-001"), 9);
    const merged = value(rows, "VM-M01");
    expect(merged).toBeGreaterThanOrEqual(Math.min(value(source, "VM-033"), value(source, "VM-040")) - 1e-9);
    expect(merged).toBeLessThanOrEqual(Math.max(value(source, "VM-033"), value(source, "VM-040")) + 1e-9);
  }, 120_000);

  it("takes a continuation's periods as observed and carries only the others, naming them in the version detail", async () => {
    const steward = await authorizeMember(world.users.steward.id, world.workspace.slug, "data.curate");
    const { id: crosswalkId } = await deriveCrosswalkFor(steward, { fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    // The last period observed on the reformed districts: every region a value of its own.
    const last = world.periods[world.periods.length - 1];
    const regions = await db().query<{ code: string }>("SELECT code FROM regions WHERE boundary_version_id = $1 ORDER BY code", { bind: [reformVersionId], type: QueryTypes.SELECT });
    const observed = new Map(regions.map((r, i) => [r.code, 3 + (i % 11) / 2]));
    const lines = ["region,period,indicator,value", ...[...observed].map(([code, value]) => `${code},${last},unemployment_rate,${value}`)];
    const uploadId = await upload("panel", `observed-${Date.now()}.csv`, `${lines.join("\n")}\n`);
    const panelName = `On the reformed districts ${Date.now()}`;
    const set = await db().query<{ boundary_set_id: number }>("SELECT boundary_set_id FROM boundary_versions WHERE id = $1", { bind: [reformVersionId], type: QueryTypes.SELECT });
    const continuation = await createPanelVersion(
      steward,
      { uploadId, panelName, boundarySetId: set[0].boundary_set_id, boundaryVersionId: reformVersionId, decimal: ".", mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" }, remember: false },
      { enqueueJob: false },
    );
    expect((await ingestPanelVersion(continuation.id)).state).toBe("validated");

    const made = await harmonisePanel(steward, { panelVersionId: world.panel.panelVersionId, crosswalkId, panelName, continuationPanelVersionId: continuation.id }, { enqueueJob: false });
    expect(made.version).toBe(2);
    expect(made.provenance.carriedPeriods).toEqual(world.periods.slice(0, -1));
    expect(made.provenance.firstPeriodOnTarget).toBe(last);
    expect((await ingestPanelVersion(made.id)).state).toBe("validated");
    const rows = await db().query<{ region_code: string; value: number }>(
      "SELECT region_code, value FROM observations WHERE panel_version_id = $1 AND indicator_code = 'unemployment_rate' AND period_key = $2",
      { bind: [made.id, last], type: QueryTypes.SELECT },
    );
    expect(rows.length).toBe(observed.size);
    for (const r of rows) expect(Number(r.value)).toBe(observed.get(r.region_code));

    const detail = await versionDetail(world.workspace.id, "panel", made.id, true);
    expect(detail?.harmonisation).toMatchObject({
      carriedPeriods: world.periods.slice(0, -1),
      firstPeriodOnTarget: last,
      source: { panelVersionId: world.panel.panelVersionId },
      crosswalk: { id: crosswalkId, origin: "derived" },
      continuation: { panelVersionId: continuation.id, panelName, version: 1 },
    });
    expect(detail?.harmonisation?.toBoundary?.version).toBeGreaterThan(0);
  }, 120_000);

  it("refuses viewers and other workspaces", async () => {
    await expect(authorizeMember(world.users.economist.id, world.workspace.slug, "data.curate")).rejects.toMatchObject({ status: 403 });
    const steward = await authorizeMember(world.users.steward.id, world.workspace.slug, "data.curate");
    const { id } = await deriveCrosswalkFor(steward, { fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId });
    const outsider = await authorizeMember(world.outsider.id, world.outsiderSlug, "data.curate");
    await expect(getCrosswalk(outsider, id)).rejects.toMatchObject({ status: 404 });
    await expect(harmonisePanel(outsider, { panelVersionId: world.panel.panelVersionId, crosswalkId: id }, { enqueueJob: false })).rejects.toMatchObject({ status: 404 });
    await expect(deriveCrosswalkFor(outsider, { fromBoundaryVersionId: world.panel.boundaryVersionId, toBoundaryVersionId: reformVersionId })).rejects.toMatchObject({ status: 404 });
  }, 60_000);
});

/**
 * Boundary reforms behind the routes: crosswalks between two boundary versions
 * (derived by areal weighting, or a steward's from,to,share CSV), their pairs,
 * and harmonising a panel version through one into a new panel version on the
 * target boundaries. Every call into the engine goes through ./engine.ts.
 *
 * A harmonised version is an ordinary panel version: its values are written
 * as a long CSV (region,period,indicator,value) to the version's own key in
 * the file store, with its SHA-256, and it is validated by the same
 * `intake-validate` job as an upload, so the report, the difference from the
 * previous version, publishing and runs work on it unchanged. Declared rates
 * are left out of that file: validation derives them again from the
 * harmonised events and population, as it does for any file carrying only
 * the counts.
 */
import { createHash } from "node:crypto";
import { QueryTypes, type Transaction } from "sequelize";
import { z } from "zod";
import { db } from "@/lib/db";
import { auditMember } from "@/lib/security/audit";
import { ConflictError, InputError, NotFoundError } from "@/lib/http/errors";
import { id, idText } from "@/lib/http/params";
import type { MemberContext } from "@/lib/auth/guard";
import { enqueue } from "@/lib/jobs/enqueue";
import { env } from "@/lib/config/env";
import { copyObject, getObjectBytes, putObject } from "@/lib/storage/s3";
import { models } from "@/lib/models";
import { loadBoundaryTopology } from "@/lib/geometry/boundary-topology";
import { rateDeclarationsOf } from "@/lib/intake/published-panel";
import { receivedUpload } from "@/lib/intake/service";
import { lockWorkspaceQuota, quotaRefusal, workspaceStorageUsed } from "@/lib/intake/storage-quota";
import { sha256Hex, versionFileKey } from "@/lib/intake/version-files";
import type { HarmonisationProvenance } from "@/models/intake-types";
import { deriveCrosswalk, harmoniseValues, parseCrosswalkCsv, regionAreas, type CrosswalkIssue, type CrosswalkPair, type HarmoniseMethod } from "./engine";
import { carriedPeriods, defaultMethods, reformSummary, resolveMethods, type IndicatorMethod, type ReformSummary } from "./methods";

// ---------------------------------------------------------------- schemas

export const deriveCrosswalkSchema = z.object({
  fromBoundaryVersionId: id(),
  toBoundaryVersionId: id(),
});
export const uploadedCrosswalkSchema = deriveCrosswalkSchema.extend({ uploadId: z.string().uuid("uploadId is not an upload id") });
/** POST …/intake/crosswalks: with an uploadId the steward's CSV, without it a derived (area-weighted) crosswalk. */
export const createCrosswalkSchema = deriveCrosswalkSchema.extend({ uploadId: z.string().uuid("uploadId is not an upload id").optional() });
export type CreateCrosswalkInput = z.infer<typeof createCrosswalkSchema>;

const chosenMethodSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("extensive") }),
  z.object({ kind: z.literal("intensive") }),
  z.object({ kind: z.literal("intensive-by"), denominator: z.string().trim().min(1).max(120) }),
]);

export const harmoniseSchema = z.object({
  panelVersionId: id(),
  crosswalkId: id(),
  /** Per indicator code; indicators left out keep their default method. */
  methods: z.record(z.string().trim().min(1).max(120), chosenMethodSchema).default({}),
  /** A validated or published version on the target boundaries whose periods are observed there: taken as they are, the rest carried across. */
  continuationPanelVersionId: id().optional(),
  /** When the target boundaries belong to another boundary set: the name of the panel to add the version to (default: source panel name + the set). */
  panelName: z.string().trim().min(1).max(200).optional(),
});
export type HarmoniseInput = z.input<typeof harmoniseSchema>;

/** GET …/intake/harmonise/defaults?panelVersionId=. */
export const harmoniseDefaultsQuerySchema = z.object({ panelVersionId: idText() });
export const crosswalkParamsSchema = z.object({ crosswalkId: z.string().regex(/^[1-9][0-9]{0,9}$/, "must be a whole number").transform(Number) });

// ---------------------------------------------------------------- reading

export interface CrosswalkReport {
  origin: "derived" | "uploaded";
  ok: boolean;
  coordinates?: "planar" | "geographic";
  unmatchedFrom: string[];
  uncoveredTo: string[];
  droppedSlivers: CrosswalkPair[];
  issues: CrosswalkIssue[];
  errorCount: number;
  warningCount: number;
  summary: ReformSummary;
}

export interface CrosswalkListItem {
  id: number;
  origin: "derived" | "uploaded";
  status: "pending" | "ready" | "rejected";
  fileName: string | null;
  pairCount: number | null;
  from: BoundaryVersionRef;
  to: BoundaryVersionRef;
  createdAt: string;
  createdBy: string | null;
}
export interface BoundaryVersionRef {
  id: number;
  setName: string;
  version: number;
  state: string;
  regionCount: number | null;
}
export interface CrosswalkDetail extends CrosswalkListItem {
  report: CrosswalkReport | null;
  pairs: (CrosswalkPair & { overlapArea: number | null })[];
  /** Harmonised panel versions made through this crosswalk. */
  harmonised: { panelVersionId: number; panelName: string; version: number; state: string }[];
}

interface CrosswalkRow {
  id: number;
  origin: "derived" | "uploaded";
  status: "pending" | "ready" | "rejected";
  file_name: string | null;
  pair_count: number | null;
  report: CrosswalkReport | null;
  created_at: Date;
  created_by_email: string | null;
  from_id: number;
  from_set: string;
  from_version: number;
  from_state: string;
  from_regions: number | null;
  to_id: number;
  to_set: string;
  to_version: number;
  to_state: string;
  to_regions: number | null;
}

const CROSSWALK_SELECT = `
  SELECT c.id, c.origin, c.status, c.file_name, c.pair_count, c.report, c.created_at, u.email AS created_by_email,
         fv.id AS from_id, fs.name AS from_set, fv.version AS from_version, fv.state AS from_state, fv.region_count AS from_regions,
         tv.id AS to_id, ts.name AS to_set, tv.version AS to_version, tv.state AS to_state, tv.region_count AS to_regions
    FROM crosswalks c
    JOIN boundary_versions fv ON fv.id = c.from_boundary_version_id JOIN boundary_sets fs ON fs.id = fv.boundary_set_id
    JOIN boundary_versions tv ON tv.id = c.to_boundary_version_id JOIN boundary_sets ts ON ts.id = tv.boundary_set_id
    LEFT JOIN users u ON u.id = c.created_by
   WHERE c.workspace_id = :workspaceId`;

function listItem(r: CrosswalkRow): CrosswalkListItem {
  return {
    id: r.id,
    origin: r.origin,
    status: r.status,
    fileName: r.file_name,
    pairCount: r.pair_count,
    from: { id: r.from_id, setName: r.from_set, version: r.from_version, state: r.from_state, regionCount: r.from_regions },
    to: { id: r.to_id, setName: r.to_set, version: r.to_version, state: r.to_state, regionCount: r.to_regions },
    createdAt: new Date(r.created_at).toISOString(),
    createdBy: r.created_by_email,
  };
}

export async function listCrosswalks(member: MemberContext): Promise<CrosswalkListItem[]> {
  const rows = await db().query<CrosswalkRow>(`${CROSSWALK_SELECT} ORDER BY c.id DESC`, { replacements: { workspaceId: member.workspace.id }, type: QueryTypes.SELECT });
  return rows.map(listItem);
}

async function crosswalkRow(workspaceId: number, crosswalkId: number, transaction?: Transaction): Promise<CrosswalkRow> {
  const rows = await db().query<CrosswalkRow>(`${CROSSWALK_SELECT} AND c.id = :crosswalkId`, {
    replacements: { workspaceId, crosswalkId },
    type: QueryTypes.SELECT,
    transaction,
  });
  if (!rows[0]) throw new NotFoundError("There is no such crosswalk in this workspace.");
  return rows[0];
}

async function pairsOf(crosswalkId: number): Promise<(CrosswalkPair & { overlapArea: number | null })[]> {
  return db().query<CrosswalkPair & { overlapArea: number | null }>(
    `SELECT from_code AS "from", to_code AS "to", share, overlap_area AS "overlapArea" FROM crosswalk_pairs WHERE crosswalk_id = :crosswalkId ORDER BY from_code, to_code`,
    { replacements: { crosswalkId }, type: QueryTypes.SELECT },
  );
}

export async function getCrosswalk(member: MemberContext, crosswalkId: number): Promise<CrosswalkDetail> {
  const row = await crosswalkRow(member.workspace.id, crosswalkId);
  const harmonised = await db().query<{ panelVersionId: number; panelName: string; version: number; state: string }>(
    `SELECT pv.id AS "panelVersionId", p.name AS "panelName", pv.version, pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE pv.crosswalk_id = :crosswalkId AND p.workspace_id = :workspaceId ORDER BY pv.id`,
    { replacements: { crosswalkId, workspaceId: member.workspace.id }, type: QueryTypes.SELECT },
  );
  return { ...listItem(row), report: row.report, pairs: await pairsOf(crosswalkId), harmonised };
}

// ---------------------------------------------------------------- creating

async function usableBoundaryVersion(workspaceId: number, boundaryVersionId: number, field: string, transaction?: Transaction): Promise<{ id: number; state: string; version: number; setId: number; setName: string }> {
  const rows = await db().query<{ id: number; state: string; version: number; set_id: number; set_name: string }>(
    `SELECT bv.id, bv.state, bv.version, s.id AS set_id, s.name AS set_name FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id
      WHERE bv.id = :boundaryVersionId AND s.workspace_id = :workspaceId`,
    { replacements: { boundaryVersionId, workspaceId }, type: QueryTypes.SELECT, transaction },
  );
  const row = rows[0];
  if (!row) throw new NotFoundError(`${field}: there is no such boundary version in this workspace.`);
  if (row.state !== "validated" && row.state !== "published") {
    throw new ConflictError(`${field}: boundary version ${row.version} of '${row.set_name}' is ${row.state}; a crosswalk needs validated or published boundaries.`);
  }
  return { id: row.id, state: row.state, version: row.version, setId: row.set_id, setName: row.set_name };
}

async function regionCodes(boundaryVersionId: number): Promise<string[]> {
  const rows = await db().query<{ code: string }>("SELECT code FROM regions WHERE boundary_version_id = :id ORDER BY id", {
    replacements: { id: boundaryVersionId },
    type: QueryTypes.SELECT,
  });
  return rows.map((r) => r.code);
}

async function insertPairs(crosswalkId: number, pairs: readonly (CrosswalkPair & { overlapArea: number | null })[], transaction: Transaction): Promise<void> {
  for (let start = 0; start < pairs.length; start += 2000) {
    const chunk = pairs.slice(start, start + 2000);
    await db().query(
      `INSERT INTO crosswalk_pairs (crosswalk_id, from_code, to_code, share, overlap_area)
       SELECT :crosswalkId, f, t, s, a FROM unnest(ARRAY[:from]::text[], ARRAY[:to]::text[], ARRAY[:share]::float8[], ARRAY[:area]::float8[]) AS x(f, t, s, a)`,
      {
        replacements: {
          crosswalkId,
          from: chunk.map((p) => p.from),
          to: chunk.map((p) => p.to),
          share: chunk.map((p) => p.share),
          area: chunk.map((p) => p.overlapArea),
        },
        transaction,
      },
    );
  }
}

function bothVersionsDiffer(input: { fromBoundaryVersionId: number; toBoundaryVersionId: number }): void {
  if (input.fromBoundaryVersionId === input.toBoundaryVersionId) throw new InputError("a crosswalk joins two different boundary versions", "toBoundaryVersionId");
}

/**
 * Derives the area-weighted crosswalk between two boundary versions of the
 * workspace and stores it with its pairs and report. Runs in the request:
 * a few hundred regions take well under a second.
 */
export async function deriveCrosswalkFor(member: MemberContext, input: z.infer<typeof deriveCrosswalkSchema>): Promise<{ id: number; status: "ready" }> {
  bothVersionsDiffer(input);
  const from = await usableBoundaryVersion(member.workspace.id, input.fromBoundaryVersionId, "fromBoundaryVersionId");
  const to = await usableBoundaryVersion(member.workspace.id, input.toBoundaryVersionId, "toBoundaryVersionId");
  const [source, target] = await Promise.all([loadBoundaryTopology(from.id), loadBoundaryTopology(to.id)]);
  const derived = deriveCrosswalk(
    { topology: source.topology, object: source.objectName, idProperty: source.idProperty },
    { topology: target.topology, object: target.objectName, idProperty: target.idProperty },
  );
  const report: CrosswalkReport = {
    origin: "derived",
    ok: true,
    coordinates: derived.coordinates,
    unmatchedFrom: derived.unmatchedFrom,
    uncoveredTo: derived.uncoveredTo,
    droppedSlivers: derived.droppedSlivers.slice(0, 200),
    issues: [],
    errorCount: 0,
    warningCount: derived.unmatchedFrom.length + derived.uncoveredTo.length,
    summary: reformSummary(derived.pairs),
  };
  const pairs = derived.pairs.map((p) => ({ ...p, overlapArea: p.share * (derived.fromAreas[p.from] ?? Number.NaN) }));
  const createdId = await db().transaction(async (transaction) => {
    const [rows] = (await db().query(
      `INSERT INTO crosswalks (workspace_id, from_boundary_version_id, to_boundary_version_id, origin, status, report, pair_count, created_by)
       VALUES (:workspaceId, :from, :to, 'derived', 'ready', :report, :pairCount, :userId) RETURNING id`,
      {
        replacements: { workspaceId: member.workspace.id, from: from.id, to: to.id, report: JSON.stringify(report), pairCount: pairs.length, userId: member.user.id },
        transaction,
      },
    )) as unknown as [{ id: number }[]];
    const crosswalkId = rows[0].id;
    await insertPairs(crosswalkId, pairs, transaction);
    await auditMember(
      member,
      {
        action: "crosswalk.created",
        target: `crosswalk ${crosswalkId}: '${from.setName}' v${from.version} → '${to.setName}' v${to.version}`,
        detail: { crosswalkId, origin: "derived", fromBoundaryVersionId: from.id, toBoundaryVersionId: to.id, pairs: pairs.length },
      },
      transaction,
    );
    return crosswalkId;
  });
  return { id: createdId, status: "ready" };
}

/**
 * A steward's crosswalk CSV (a received upload of kind crosswalk): read,
 * checked against the region codes of both versions, stored with its report
 * (ready, or rejected with its issues by line and code) and its own copy of
 * the file under the crosswalk's key.
 */
export async function createUploadedCrosswalk(member: MemberContext, input: z.infer<typeof uploadedCrosswalkSchema>): Promise<{ id: number; status: "ready" | "rejected"; report: CrosswalkReport }> {
  bothVersionsDiffer(input);
  const upload = await receivedUpload(member, input.uploadId, "crosswalk");
  const from = await usableBoundaryVersion(member.workspace.id, input.fromBoundaryVersionId, "fromBoundaryVersionId");
  const to = await usableBoundaryVersion(member.workspace.id, input.toBoundaryVersionId, "toBoundaryVersionId");
  const bytes = await getObjectBytes(upload.s3Key);
  if (sha256Hex(bytes) !== upload.sha256) throw new ConflictError("The stored crosswalk file no longer has the checksum it was uploaded with; upload it again.");
  const parsed = parseCrosswalkCsv(bytes.toString("utf8"), await regionCodes(from.id), await regionCodes(to.id));
  const errors = parsed.issues.filter((i) => i.severity === "error");
  const ok = errors.length === 0;
  const report: CrosswalkReport = {
    origin: "uploaded",
    ok,
    unmatchedFrom: parsed.unmatchedFrom,
    uncoveredTo: parsed.uncoveredTo,
    droppedSlivers: [],
    issues: parsed.issues,
    errorCount: errors.length,
    warningCount: parsed.issues.length - errors.length,
    summary: reformSummary(ok ? parsed.pairs : []),
  };
  const status = ok ? "ready" : "rejected";
  const createdId = await db().transaction(async (transaction) => {
    const [rows] = (await db().query(
      `INSERT INTO crosswalks (workspace_id, from_boundary_version_id, to_boundary_version_id, origin, upload_id, s3_key, file_name, byte_size, sha256, status, report, pair_count, created_by)
       VALUES (:workspaceId, :from, :to, 'uploaded', :uploadId, :s3Key, :fileName, :size, :sha256, :status, :report, :pairCount, :userId) RETURNING id`,
      {
        replacements: {
          workspaceId: member.workspace.id,
          from: from.id,
          to: to.id,
          uploadId: upload.id,
          s3Key: upload.s3Key,
          fileName: upload.fileName,
          size: Number(upload.declaredSize),
          sha256: upload.sha256,
          status,
          report: JSON.stringify(report),
          pairCount: ok ? parsed.pairs.length : null,
          userId: member.user.id,
        },
        transaction,
      },
    )) as unknown as [{ id: number }[]];
    const crosswalkId = rows[0].id;
    // Its own copy, so the upload (and its still-valid PUT URL) can go without touching the crosswalk.
    const fileKey = versionFileKey(member.workspace.id, "crosswalk", crosswalkId, upload.sha256);
    await copyObject(upload.s3Key, fileKey);
    await db().query("UPDATE crosswalks SET s3_key = :fileKey WHERE id = :crosswalkId", { replacements: { fileKey, crosswalkId }, transaction });
    if (ok) await insertPairs(crosswalkId, parsed.pairs.map((p) => ({ ...p, overlapArea: null })), transaction);
    await auditMember(
      member,
      {
        action: "crosswalk.created",
        target: `crosswalk ${crosswalkId}: '${from.setName}' v${from.version} → '${to.setName}' v${to.version}`,
        detail: { crosswalkId, origin: "uploaded", uploadId: upload.id, fileName: upload.fileName, status, errors: errors.length, pairs: ok ? parsed.pairs.length : 0 },
      },
      transaction,
    );
    return crosswalkId;
  });
  return { id: createdId, status, report };
}

// ---------------------------------------------------------------- harmonising

interface SourceVersion {
  id: number;
  version: number;
  state: string;
  panel_id: number;
  panel_name: string;
  boundary_version_id: number;
  boundary_set_id: number;
}

async function panelVersionIn(workspaceId: number, panelVersionId: number, field: string): Promise<SourceVersion> {
  const rows = await db().query<SourceVersion>(
    `SELECT pv.id, pv.version, pv.state, p.id AS panel_id, p.name AS panel_name, pv.boundary_version_id, p.boundary_set_id
       FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE pv.id = :panelVersionId AND p.workspace_id = :workspaceId`,
    { replacements: { panelVersionId, workspaceId }, type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row) throw new NotFoundError(`${field}: there is no such panel version in this workspace.`);
  if (row.state !== "validated" && row.state !== "published") {
    throw new ConflictError(`${field}: version ${row.version} of '${row.panel_name}' is ${row.state}; only validated or published versions can be harmonised.`);
  }
  return row;
}

interface ObservationRow {
  indicator_code: string;
  period_key: string;
  region_code: string;
  value: number | null;
}

async function observationsOf(panelVersionId: number): Promise<ObservationRow[]> {
  return db().query<ObservationRow>(
    "SELECT indicator_code, period_key, region_code, value FROM observations WHERE panel_version_id = :panelVersionId ORDER BY indicator_code, period_key, region_code",
    { replacements: { panelVersionId }, type: QueryTypes.SELECT },
  );
}

/** The defaults a harmonise form starts from: every indicator of the version with its default method. */
export async function harmoniseDefaults(member: MemberContext, panelVersionId: number): Promise<{ indicators: string[]; methods: Record<string, IndicatorMethod> }> {
  const source = await panelVersionIn(member.workspace.id, panelVersionId, "panelVersionId");
  const indicators = (
    await db().query<{ code: string }>("SELECT DISTINCT indicator_code AS code FROM observations WHERE panel_version_id = :id ORDER BY 1", {
      replacements: { id: source.id },
      type: QueryTypes.SELECT,
    })
  ).map((r) => r.code);
  return { indicators, methods: defaultMethods(indicators, await rateDeclarationsOf(member.workspace.id)) };
}

function csvCell(value: string): string {
  return /[",\n\r]/.test(value) ? `"${value.replace(/"/g, '""')}"` : value;
}

export interface HarmonisedVersion {
  id: number;
  version: number;
  panelId: number;
  panelName: string;
  jobId: string | null;
  provenance: HarmonisationProvenance;
}

/**
 * Harmonises a panel version through a ready crosswalk into a new panel
 * version (state uploaded, validated by the intake-validate job) on the
 * crosswalk's target boundaries: a new version of the same panel when the
 * target is a version of the panel's boundary set, else of a panel on the
 * target's set.
 */
export async function harmonisePanel(member: MemberContext, rawInput: HarmoniseInput, options: { enqueueJob?: boolean } = {}): Promise<HarmonisedVersion> {
  const input = harmoniseSchema.parse(rawInput);
  const workspaceId = member.workspace.id;
  const source = await panelVersionIn(workspaceId, input.panelVersionId, "panelVersionId");
  const crosswalk = await crosswalkRow(workspaceId, input.crosswalkId);
  if (crosswalk.status !== "ready") throw new ConflictError(`Crosswalk ${crosswalk.id} is ${crosswalk.status}; only a ready crosswalk can harmonise a panel.`);
  if (crosswalk.from_id !== source.boundary_version_id) {
    throw new ConflictError(
      `Version ${source.version} of '${source.panel_name}' is on other boundaries than crosswalk ${crosswalk.id} starts from ('${crosswalk.from_set}' v${crosswalk.from_version}).`,
    );
  }
  const target = await usableBoundaryVersion(workspaceId, crosswalk.to_id, "crosswalkId");
  const continuation = input.continuationPanelVersionId === undefined ? null : await panelVersionIn(workspaceId, input.continuationPanelVersionId, "continuationPanelVersionId");
  if (continuation && continuation.boundary_version_id !== target.id) {
    throw new InputError(`continuationPanelVersionId: version ${continuation.version} of '${continuation.panel_name}' is not on the crosswalk's target boundaries`, "continuationPanelVersionId");
  }

  const { indicators, methods: defaults } = await harmoniseDefaults(member, source.id);
  const resolved = resolveMethods(defaults, input.methods);
  if (!resolved.ok) throw new InputError(`methods.${resolved.indicator}: ${resolved.problem}`, `methods.${resolved.indicator}`);
  const methods = resolved.methods;

  const pairs = await pairsOf(crosswalk.id);
  let overlapAreas: number[];
  if (pairs.every((p) => p.overlapArea !== null)) overlapAreas = pairs.map((p) => p.overlapArea as number);
  else {
    // An uploaded crosswalk carries shares only: the overlap is share × the source region's area.
    const topology = await loadBoundaryTopology(crosswalk.from_id);
    const areas = regionAreas({ topology: topology.topology, object: topology.objectName, idProperty: topology.idProperty });
    overlapAreas = pairs.map((p) => p.share * (areas[p.from] ?? Number.NaN));
  }

  // values[indicator][period] = Map(region → value)
  const values = new Map<string, Map<string, Map<string, number | null>>>();
  for (const o of await observationsOf(source.id)) {
    const byPeriod = values.get(o.indicator_code) ?? new Map<string, Map<string, number | null>>();
    values.set(o.indicator_code, byPeriod);
    const byRegion = byPeriod.get(o.period_key) ?? new Map<string, number | null>();
    byPeriod.set(o.period_key, byRegion);
    byRegion.set(o.region_code, o.value === null ? null : Number(o.value));
  }
  const sourcePeriods = [...new Set([...values.values()].flatMap((byPeriod) => [...byPeriod.keys()]))].sort();
  const continuationRows = continuation ? await observationsOf(continuation.id) : [];
  const periods = carriedPeriods(sourcePeriods, [...new Set(continuationRows.map((r) => r.period_key))]);
  const carried = new Set(periods.carried);

  const lines = ["region,period,indicator,value"];
  const write = (region: string, period: string, indicator: string, value: number | null) =>
    lines.push(`${csvCell(region)},${csvCell(period)},${csvCell(indicator)},${value === null || !Number.isFinite(value) ? "" : String(value)}`);
  for (const code of indicators) {
    const method = methods[code];
    if (method.kind === "rate") continue; // re-derived at validation from the harmonised events and population
    let engineMethod: HarmoniseMethod | null = method.kind === "extensive" ? { kind: "extensive" } : method.kind === "intensive" ? { kind: "intensive", overlapAreas } : null;
    for (const [period, byRegion] of values.get(code) ?? []) {
      if (!carried.has(period)) continue;
      if (method.kind === "intensive-by") engineMethod = { kind: "intensive-by", denominatorByFrom: values.get(method.denominator)?.get(period) ?? new Map() };
      const result = harmoniseValues(pairs, byRegion, engineMethod as HarmoniseMethod);
      for (const [region, value] of [...result].sort((a, b) => a[0].localeCompare(b[0]))) write(region, period, code, value);
    }
  }
  const rateCodes = new Set(Object.entries(methods).filter(([, m]) => m.kind === "rate").map(([code]) => code));
  for (const o of continuationRows) {
    // The continuation's own rates are dropped too, so every period's rate comes from the same derivation.
    if (!rateCodes.has(o.indicator_code)) write(o.region_code, o.period_key, o.indicator_code, o.value === null ? null : Number(o.value));
  }
  const body = Buffer.from(`${lines.join("\n")}\n`, "utf8");
  const sha256 = createHash("sha256").update(body).digest("hex");

  const provenance: HarmonisationProvenance = {
    sourcePanelVersionId: source.id,
    crosswalkId: crosswalk.id,
    fromBoundaryVersionId: crosswalk.from_id,
    toBoundaryVersionId: target.id,
    methods,
    carriedPeriods: periods.carried,
    firstPeriodOnTarget: periods.firstOnTarget,
    ...(continuation ? { continuationPanelVersionId: continuation.id } : {}),
  };
  const { Panel, PanelVersion } = models();
  const created = await db().transaction(async (transaction) => {
    await lockWorkspaceQuota(workspaceId, transaction);
    const config = env();
    const refusal = quotaRefusal({
      workspaceName: member.workspace.name,
      usedBytes: await workspaceStorageUsed(workspaceId, transaction),
      requestBytes: body.length,
      quotaMb: config.WORKSPACE_STORAGE_QUOTA_MB,
      abandonAfterHours: config.UPLOAD_ABANDON_HOURS,
    });
    if (refusal) throw refusal;
    let panel;
    if (target.setId === source.boundary_set_id) {
      panel = await Panel.findOne({ where: { id: source.panel_id, workspaceId }, transaction, lock: transaction.LOCK.UPDATE });
    } else {
      const name = input.panelName ?? `${source.panel_name} on ${target.setName}`.slice(0, 200);
      const existing = await Panel.findOne({ where: { workspaceId, name }, transaction });
      if (existing && existing.boundarySetId !== target.setId) throw new ConflictError(`Panel '${name}' already exists on another boundary set; name another panel.`);
      await Panel.findOrCreate({ where: { workspaceId, name }, defaults: { workspaceId, name, boundarySetId: target.setId, createdBy: member.user.id }, transaction });
      panel = await Panel.findOne({ where: { workspaceId, name }, transaction, lock: transaction.LOCK.UPDATE });
    }
    if (!panel) throw new Error("the panel to harmonise into vanished");
    const nextRows = await db().query<{ v: number | null }>("SELECT max(version) AS v FROM panel_versions WHERE panel_id = :panelId", {
      replacements: { panelId: panel.id },
      type: QueryTypes.SELECT,
      transaction,
    });
    const version = (nextRows[0]?.v ?? 0) + 1;
    const fileName = `harmonised-${source.panel_name.replace(/[^\w.-]+/g, "_").slice(0, 80)}-v${source.version}-crosswalk-${crosswalk.id}.csv`;
    const row = await PanelVersion.create(
      {
        panelId: panel.id,
        version,
        uploadId: null,
        s3Key: "pending",
        fileName,
        byteSize: body.length,
        sha256,
        layout: "long",
        decimalSeparator: ".",
        mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
        boundaryVersionId: target.id,
        rowCount: null,
        report: null,
        diff: null,
        createdBy: member.user.id,
        validatedAt: null,
        publishedAt: null,
        archivedAt: null,
        sourcePanelVersionId: source.id,
        crosswalkId: crosswalk.id,
        harmonisation: provenance,
      },
      { transaction },
    );
    const fileKey = versionFileKey(workspaceId, "panel", row.id, sha256);
    await putObject(fileKey, body, "text/csv");
    await row.update({ s3Key: fileKey, fileKey }, { transaction });
    await auditMember(
      member,
      {
        action: "panel.harmonised",
        target: `panel "${panel.name}" v${version}`,
        detail: { versionId: row.id, sourcePanelVersionId: source.id, crosswalkId: crosswalk.id, methods, carriedPeriods: periods.carried.length, firstPeriodOnTarget: periods.firstOnTarget },
      },
      transaction,
    );
    return { id: row.id, version, panelId: panel.id, panelName: panel.name };
  });
  const jobId = options.enqueueJob === false ? null : await enqueue("intake-validate", { kind: "panel", versionId: created.id });
  return { ...created, jobId, provenance };
}

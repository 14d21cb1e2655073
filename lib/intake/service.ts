/**
 * Intake operations behind the route handlers: uploads (presigned PUT, then a
 * size and SHA-256 check of what arrived), new boundary and panel versions
 * (queued for validation), publish and archive, column mappings remembered per
 * workspace, indicator metadata. Every function takes a MemberContext that the
 * caller obtained from requireMember/memberRoute with the right capability;
 * ids from the URL are always looked up inside that workspace.
 *
 * Checksums: the browser computes SHA-256 with crypto.subtle before it uploads
 * and declares it; the server streams the stored object back from S3, hashes
 * it and compares. A mismatch or a short object marks the upload failed,
 * deletes the object, and records no version. A version made from a received
 * upload gets its own copy of the object (version-files.ts), verified against
 * that checksum on every read.
 */
import { createHash, randomUUID } from "node:crypto";
import type { Readable } from "node:stream";
import { Op, QueryTypes, type Transaction } from "sequelize";
import { z } from "zod";
import { db } from "@/lib/db";
import { auditMember, versionTarget } from "@/lib/security/audit";
import { ConflictError, InputError, NotFoundError } from "@/lib/http/errors";
import type { MemberContext } from "@/lib/auth/guard";
import { enqueue } from "@/lib/jobs/enqueue";
import { env } from "@/lib/config/env";
import { copyObject, deleteObject, getObjectBytes, getObjectStream, headObject, presignPut } from "@/lib/storage/s3";
import { models } from "@/lib/models";
import type { UploadKind } from "@/models/intake-types";
import { boundaryIds, inspectBoundaries, loadBoundaries, BoundaryError, type BoundarySummary } from "./boundaries";
import { id, idText, text, uuidText } from "@/lib/http/params";
import { fileIndicatorCodes, indicatorFromFileName, normaliseHeader } from "./mapping";
import { readPanelHeader, readPanelSample, type PanelPreview } from "./preview";
import { columnMappingSchema, decimalSchema, type ColumnMapping } from "./schemas";
import { declarationProblem, rateSpecSchema, type RateSpec } from "./rates";
import { rateDeclarationsOf } from "./published-panel";
import { lockWorkspaceQuota, quotaRefusal, workspaceStorageUsed } from "./storage-quota";
import { versionFileKey } from "./version-files";
import { suggestTarget, type TargetSuggestion } from "./version-target";
import { boundaryTargetCandidates, panelTargetCandidates } from "./version-target-queries";

/** Largest file accepted, in bytes (checked before anything is read or signed). */
export const MAX_UPLOAD_BYTES = 200 * 1024 * 1024;
/** How long a presigned PUT stays valid. */
export const UPLOAD_URL_SECONDS = 3600;

/** A request that is well-formed JSON but cannot be accepted; `field` names the culprit (HTTP 400). */
export class IntakeInputError extends InputError {
  constructor(message: string, field: string | null = null) {
    super(message, field);
    this.name = "IntakeInputError";
  }
}

// ---------------------------------------------------------------- schemas

const sha256Schema = z
  .string()
  .trim()
  .toLowerCase()
  .regex(/^[0-9a-f]{64}$/, "must be the file's SHA-256 as 64 hexadecimal characters");

export const createUploadSchema = z.object({
  kind: z.enum(["boundaries", "panel", "crosswalk"]),
  fileName: text({ min: 1, max: 255, empty: "the file needs a name", tooLong: "the file name is longer than 255 characters" }),
  size: z
    .number()
    .int()
    .min(1, "the file is empty")
    .max(MAX_UPLOAD_BYTES, `the file is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MB; split the panel or simplify the boundaries`),
  sha256: sha256Schema,
});
export type CreateUploadInput = z.infer<typeof createUploadSchema>;

export const createBoundaryVersionSchema = z
  .object({
    uploadId: z.string().uuid("uploadId is not an upload id"),
    boundarySetId: id().optional(),
    setName: text({ min: 1, max: 200, empty: "name the boundary set" }).optional(),
    objectName: text({ min: 1, max: 200, empty: "choose the object that holds the regions" }),
    idProperty: text({ min: 1, max: 200, empty: "choose the property that holds the region code" }),
    nameProperty: text({ min: 1, max: 200 }).nullable().optional(),
  })
  .refine((v) => v.boundarySetId !== undefined || v.setName !== undefined, { message: "choose a boundary set or name a new one", path: ["setName"] });
export type CreateBoundaryVersionInput = z.infer<typeof createBoundaryVersionSchema>;

export const createPanelVersionSchema = z
  .object({
    uploadId: z.string().uuid("uploadId is not an upload id"),
    panelId: id().optional(),
    panelName: text({ min: 1, max: 200, empty: "name the panel" }).optional(),
    /** For a new panel: the boundary set its regions come from. */
    boundarySetId: id().optional(),
    /** The boundary version to match against; default the newest published (else validated) version of the set. */
    boundaryVersionId: id().optional(),
    decimal: decimalSchema.default("."),
    mapping: columnMappingSchema,
    remember: z.boolean().default(true),
  })
  .refine((v) => v.panelId !== undefined || v.panelName !== undefined, { message: "choose a panel or name a new one", path: ["panelName"] })
  .refine((v) => v.panelId !== undefined || v.boundarySetId !== undefined, { message: "choose the boundary set of the new panel", path: ["boundarySetId"] });
export type CreatePanelVersionInput = z.infer<typeof createPanelVersionSchema>;

export const indicatorPatchSchema = z.object({
  label: text({ min: 1, max: 200, empty: "the label cannot be empty" }),
  unit: text({ max: 80 }).nullable().default(null),
  description: text({ max: 4000, multiline: true }).nullable().default(null),
  source: text({ max: 400 }).nullable().default(null),
  higherIsBetter: z.boolean().nullable().default(null),
  /**
   * The indicator as a rate of two others of one panel: events / population ×
   * multiplier. null clears the declaration; absent leaves it as it is (a file's
   * `# rate:` line may have set it at ingest).
   */
  rate: rateSpecSchema.nullable().optional(),
});
export type IndicatorPatch = z.infer<typeof indicatorPatchSchema>;

export const versionKindSchema = z.enum(["boundaries", "panel"], { error: "must be boundaries or panel" });

/** An indicator's code as it appears in URLs and run choices. */
export const indicatorCodeSchema = text({ min: 1, max: 120, empty: "the indicator code must have 1 to 120 characters", tooLong: "the indicator code must have 1 to 120 characters" });

/** Path parameters of …/indicators/[code]. */
export const indicatorParamsSchema = z.object({ code: indicatorCodeSchema });

/** Path parameters of …/uploads/[uploadId]/…. */
export const uploadParamsSchema = z.object({ uploadId: uuidText() });

/** Path parameters of …/versions/[kind]/[versionId]. */
export const versionParamsSchema = z.object({ kind: versionKindSchema, versionId: idText() });

export type VersionKind = z.infer<typeof versionKindSchema>;

// ---------------------------------------------------------------- uploads

const CONTENT_TYPES: Record<UploadKind, string> = { boundaries: "application/json", panel: "text/csv", crosswalk: "text/csv" };
const EXTENSIONS: Record<UploadKind, RegExp> = { boundaries: /\.(topojson|geojson|json)$/i, panel: /\.(csv|tsv|txt)$/i, crosswalk: /\.(csv|tsv|txt)$/i };

function safeFileName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? "file";
  return base.replace(/[^\w.\-]+/g, "_").slice(0, 120) || "file";
}

export interface UploadTicket {
  uploadId: string;
  url: string;
  /** The browser must send exactly this Content-Type (it is signed). */
  contentType: string;
  expiresAt: string;
}

/** Duplicate of an earlier, non-rejected version of the same kind in the workspace, by checksum. */
async function findDuplicate(workspaceId: number, kind: UploadKind, sha256: string): Promise<string | null> {
  if (kind === "crosswalk") {
    const rows = await db().query<{ id: number; status: string }>(
      "SELECT id, status FROM crosswalks WHERE workspace_id = :workspaceId AND sha256 = :sha256 AND status <> 'rejected' ORDER BY id LIMIT 1",
      { replacements: { workspaceId, sha256 }, type: QueryTypes.SELECT },
    );
    const r = rows[0];
    return r ? `This file was already uploaded as crosswalk ${r.id} (${r.status}).` : null;
  }
  if (kind === "panel") {
    const rows = await db().query<{ name: string; version: number; state: string }>(
      `SELECT p.name, pv.version, pv.state FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
        WHERE p.workspace_id = :workspaceId AND pv.sha256 = :sha256 AND pv.state <> 'rejected' ORDER BY pv.id LIMIT 1`,
      { replacements: { workspaceId, sha256 }, type: QueryTypes.SELECT },
    );
    const r = rows[0];
    return r ? `This file was already uploaded as version ${r.version} of panel '${r.name}' (${r.state}).` : null;
  }
  const rows = await db().query<{ name: string; version: number; state: string }>(
    `SELECT s.name, bv.version, bv.state FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id
      WHERE s.workspace_id = :workspaceId AND bv.sha256 = :sha256 AND bv.state <> 'rejected' ORDER BY bv.id LIMIT 1`,
    { replacements: { workspaceId, sha256 }, type: QueryTypes.SELECT },
  );
  const r = rows[0];
  return r ? `This file was already uploaded as version ${r.version} of boundary set '${r.name}' (${r.state}).` : null;
}

/**
 * Step 1: records a pending upload and signs a PUT URL for it, unless the
 * declared size would take the workspace over its storage quota
 * (WORKSPACE_STORAGE_QUOTA_MB; `options.quotaMb` overrides it for tests).
 */
export async function createUpload(member: MemberContext, input: CreateUploadInput, options: { quotaMb?: number } = {}): Promise<UploadTicket> {
  if (!EXTENSIONS[input.kind].test(input.fileName)) {
    throw new IntakeInputError(
      input.kind !== "boundaries"
        ? `'${input.fileName}' does not look like a CSV file; ${input.kind === "panel" ? "panels" : "crosswalks"} are .csv (comma, semicolon or tab separated)`
        : `'${input.fileName}' does not look like TopoJSON or GeoJSON; use a .topojson, .geojson or .json file`,
      "fileName",
    );
  }
  const duplicate = await findDuplicate(member.workspace.id, input.kind, input.sha256);
  if (duplicate) throw new ConflictError(duplicate);
  const { Upload } = models();
  const id = randomUUID();
  const s3Key = `workspaces/${member.workspace.id}/uploads/${id}/${safeFileName(input.fileName)}`;
  const contentType = CONTENT_TYPES[input.kind];
  const expiresAt = new Date(Date.now() + UPLOAD_URL_SECONDS * 1000);
  const config = env();
  const url = await db().transaction(async (transaction) => {
    // Checked and recorded under one lock, so uploads started together cannot add up past the quota.
    await lockWorkspaceQuota(member.workspace.id, transaction);
    const refusal = quotaRefusal({
      workspaceName: member.workspace.name,
      usedBytes: await workspaceStorageUsed(member.workspace.id, transaction),
      requestBytes: input.size,
      quotaMb: options.quotaMb ?? config.WORKSPACE_STORAGE_QUOTA_MB,
      abandonAfterHours: config.UPLOAD_ABANDON_HOURS,
    });
    if (refusal) throw refusal;
    const signed = await presignPut(s3Key, contentType, { expiresInSeconds: UPLOAD_URL_SECONDS, contentLength: input.size });
    await Upload.create(
      {
        id,
        workspaceId: member.workspace.id,
        kind: input.kind,
        s3Key,
        fileName: input.fileName,
        declaredSize: input.size,
        contentType,
        sha256: input.sha256,
        error: null,
        createdBy: member.user.id,
        expiresAt,
      },
      { transaction },
    );
    return signed;
  });
  return { uploadId: id, url, contentType, expiresAt: expiresAt.toISOString() };
}

export interface UploadView {
  id: string;
  kind: UploadKind;
  fileName: string;
  size: number;
  sha256: string;
  state: "pending" | "received" | "failed";
  error: string | null;
}

async function findUpload(member: MemberContext, uploadId: string) {
  const { Upload } = models();
  if (!z.string().uuid().safeParse(uploadId).success) throw new NotFoundError("There is no such upload in this workspace.");
  const upload = await Upload.findOne({ where: { id: uploadId, workspaceId: member.workspace.id } });
  if (!upload) throw new NotFoundError("There is no such upload in this workspace.");
  return upload;
}

function uploadView(upload: Awaited<ReturnType<typeof findUpload>>): UploadView {
  return {
    id: upload.id,
    kind: upload.kind,
    fileName: upload.fileName,
    size: Number(upload.declaredSize),
    sha256: upload.sha256,
    state: upload.state,
    error: upload.error,
  };
}

/** SHA-256 (hex) of a byte stream. */
export async function sha256OfStream(stream: AsyncIterable<Uint8Array>): Promise<string> {
  const hash = createHash("sha256");
  for await (const chunk of stream) hash.update(chunk);
  return hash.digest("hex");
}

/**
 * Step 2, after the browser's PUT: checks that the object arrived whole
 * (size from HEAD, then SHA-256 streamed from S3). On any mismatch the upload
 * is marked failed with a sentence saying what to do, and the object deleted.
 */
export async function completeUpload(member: MemberContext, uploadId: string): Promise<UploadView> {
  const upload = await findUpload(member, uploadId);
  if (upload.state === "received") return uploadView(upload);
  if (upload.state === "failed") throw new ConflictError(`This upload already failed: ${upload.error ?? "unknown reason"}. Upload the file again.`);
  const fail = async (message: string, removeObject: boolean): Promise<UploadView> => {
    if (removeObject) await deleteObject(upload.s3Key).catch(() => undefined);
    await upload.update({ state: "failed", error: message });
    return uploadView(upload);
  };
  const head = await headObject(upload.s3Key);
  const declared = Number(upload.declaredSize);
  if (!head) return fail("The file never reached storage (the upload was interrupted or blocked). Upload it again.", false);
  // Decided from HEAD alone: an object larger than declared (or than the limit) is never read.
  if (head.size > declared) {
    return fail(
      `The stored file has ${head.size.toLocaleString("en")} bytes, more than the ${declared.toLocaleString("en")} declared when the upload started, so it was refused unread. Upload the file again.`,
      true,
    );
  }
  if (head.size < declared) {
    return fail(
      `Only ${head.size.toLocaleString("en")} of ${declared.toLocaleString("en")} bytes arrived: the upload was interrupted half-way. Upload the file again.`,
      true,
    );
  }
  const actual = await sha256OfStream((await getObjectStream(upload.s3Key)) as Readable);
  if (actual !== upload.sha256) {
    return fail(`The stored file's checksum (${actual.slice(0, 12)}…) differs from the one your browser computed (${upload.sha256.slice(0, 12)}…): the file was changed or damaged in transit. Upload it again.`, true);
  }
  // Only the request that moves the upload out of 'pending' records it, so a
  // repeated or concurrent completion leaves exactly one event.
  const { Upload } = models();
  await db().transaction(async (transaction) => {
    const [moved] = await Upload.update({ state: "received", error: null }, { where: { id: upload.id, state: "pending" }, transaction });
    if (moved === 0) return;
    await auditMember(
      member,
      {
        action: "upload.completed",
        target: `${upload.kind === "boundaries" ? "boundary" : upload.kind} file "${upload.fileName}"`,
        detail: { uploadId: upload.id, kind: upload.kind, fileName: upload.fileName, size: declared, sha256: upload.sha256 },
      },
      transaction,
    );
  });
  await upload.reload();
  return uploadView(upload);
}

const KIND_NAMES: Record<UploadKind, string> = { boundaries: "boundaries", panel: "a panel", crosswalk: "a crosswalk" };

/** A completed upload of this workspace of the given kind (404 for another workspace's, 409 when not received). */
export async function receivedUpload(member: MemberContext, uploadId: string, kind: UploadKind) {
  const upload = await findUpload(member, uploadId);
  if (upload.kind !== kind) throw new IntakeInputError(`upload ${uploadId} is a ${upload.kind} file, not ${KIND_NAMES[kind]}`, "uploadId");
  if (upload.state !== "received") {
    throw new ConflictError(upload.state === "failed" ? `This upload failed (${upload.error ?? "unknown"}); upload the file again.` : "This upload has not been completed yet.");
  }
  return upload;
}

// ---------------------------------------------------------------- previews

/** sha256 of the normalised header names, in order: the key under which a column mapping is remembered. */
export function headerSignature(header: readonly string[]): string {
  return createHash("sha256").update(header.map((h) => normaliseHeader(h)).join("\u0001")).digest("hex");
}

export interface PanelUploadPreview extends PanelPreview {
  upload: UploadView;
  signature: string;
  /** A mapping remembered for this header in this workspace, if any (it wins over the suggestion). */
  remembered: { layout: ColumnMapping["layout"]; mapping: ColumnMapping } | null;
  /** For headers that name only periods (`region,2019,2020`): the indicator code proposed for them, from the file name. */
  periodIndicator: string;
  /** A new panel, or a new version of the panel whose latest version shares at least half of this file's (sampled) indicator codes. */
  target: TargetSuggestion;
}

export async function previewPanelUpload(member: MemberContext, uploadId: string): Promise<PanelUploadPreview> {
  const upload = await receivedUpload(member, uploadId, "panel");
  const periodIndicator = indicatorFromFileName(upload.fileName);
  const { preview, rows } = await readPanelSample((await getObjectStream(upload.s3Key)) as Readable, undefined, 5, { periodIndicator });
  const signature = headerSignature(preview.header);
  const { ColumnMappingMemory } = models();
  const memory = await ColumnMappingMemory.findOne({ where: { workspaceId: member.workspace.id, headerSignature: signature } });
  const parsed = memory ? columnMappingSchema.safeParse(memory.mapping) : null;
  const remembered = parsed?.success ? { layout: parsed.data.layout, mapping: parsed.data } : null;
  const indicators = fileIndicatorCodes(remembered?.mapping ?? preview.suggestion.mapping, preview.header, rows);
  return {
    ...preview,
    upload: uploadView(upload),
    signature,
    remembered,
    periodIndicator,
    target: suggestTarget(indicators, await panelTargetCandidates(member.workspace.id), "indicator"),
  };
}

export interface BoundaryUploadPreview {
  upload: UploadView;
  summary: BoundarySummary | null;
  /** Why the file could not be read, when it could not. */
  problem: string | null;
  /**
   * Per object and candidate code property: a new boundary set, or a new
   * version of the set whose latest version holds at least half of the
   * file's region codes under that choice.
   */
  targets: BoundaryTarget[];
}

export interface BoundaryTarget {
  object: string;
  idProperty: string;
  suggestion: TargetSuggestion;
}

export async function previewBoundaryUpload(member: MemberContext, uploadId: string): Promise<BoundaryUploadPreview> {
  const upload = await receivedUpload(member, uploadId, "boundaries");
  const text = (await getObjectBytes(upload.s3Key)).toString("utf8");
  let loaded;
  try {
    loaded = loadBoundaries(text);
  } catch (err) {
    if (err instanceof BoundaryError) return { upload: uploadView(upload), summary: null, problem: err.message, targets: [] };
    throw err;
  }
  const summary = inspectBoundaries(loaded);
  const candidates = await boundaryTargetCandidates(member.workspace.id);
  const targets: BoundaryTarget[] = [];
  for (const object of summary.objects) {
    // Only properties that can be the code (present, non-empty, unique): the others would fail validation anyway.
    for (const idProperty of object.candidateIdProperties) {
      let codes: string[];
      try {
        codes = boundaryIds(loaded, object.name, idProperty);
      } catch (err) {
        if (err instanceof BoundaryError) continue;
        throw err;
      }
      targets.push({ object: object.name, idProperty, suggestion: suggestTarget(codes, candidates, "region") });
    }
  }
  return { upload: uploadView(upload), summary, problem: null, targets };
}

// ---------------------------------------------------------------- versions

async function nextVersion(table: "boundary_versions" | "panel_versions", parentColumn: string, parentId: number, transaction: import("sequelize").Transaction): Promise<number> {
  const rows = await db().query<{ v: number | null }>(`SELECT max(version) AS v FROM ${table} WHERE ${parentColumn} = :parentId`, {
    replacements: { parentId },
    type: QueryTypes.SELECT,
    transaction,
  });
  return (rows[0]?.v ?? 0) + 1;
}

export interface CreatedVersion {
  kind: VersionKind;
  id: number;
  version: number;
  parentId: number;
  jobId: string | null;
}

/**
 * Inside a version's creating transaction: holds the upload (the sweep skips
 * a locked row, and a row it already removed is reported here rather than as
 * a foreign-key error).
 */
async function holdUpload(uploadId: string, transaction: import("sequelize").Transaction): Promise<void> {
  const rows = await db().query<{ state: string }>("SELECT state FROM uploads WHERE id = :uploadId FOR KEY SHARE", {
    replacements: { uploadId },
    type: QueryTypes.SELECT,
    transaction,
  });
  if (rows[0]?.state !== "received") {
    throw new ConflictError(`This upload is no longer available (unused uploads are removed ${env().UPLOAD_ABANDON_HOURS} hours after they were started); upload the file again.`);
  }
}

/**
 * Gives a just-created version its own copy of the upload's object (S3
 * CopyObject) under a key no presigned URL is issued for, and points the
 * version at it. The copy is checked against the version's sha256 whenever it
 * is read (version-files.ts), so bytes PUT to the upload's URL after its check
 * either never reach the version or are refused when read.
 */
async function giveVersionItsOwnCopy(
  row: { id: number; update(values: { s3Key: string; fileKey: string }, options: { transaction: import("sequelize").Transaction }): Promise<unknown> },
  kind: UploadKind,
  workspaceId: number,
  upload: { s3Key: string; sha256: string },
  transaction: import("sequelize").Transaction,
): Promise<void> {
  const fileKey = versionFileKey(workspaceId, kind, row.id, upload.sha256);
  await copyObject(upload.s3Key, fileKey);
  await row.update({ s3Key: fileKey, fileKey }, { transaction });
}

/** Records a boundary version (state uploaded) from a received upload and queues its validation. */
export async function createBoundaryVersion(member: MemberContext, input: CreateBoundaryVersionInput, options: { enqueueJob?: boolean } = {}): Promise<CreatedVersion> {
  const upload = await receivedUpload(member, input.uploadId, "boundaries");
  const { BoundarySet, BoundaryVersion } = models();
  const created = await db().transaction(async (transaction) => {
    await holdUpload(upload.id, transaction);
    let set;
    if (input.boundarySetId !== undefined) {
      set = await BoundarySet.findOne({ where: { id: input.boundarySetId, workspaceId: member.workspace.id }, transaction, lock: transaction.LOCK.UPDATE });
      if (!set) throw new NotFoundError("There is no such boundary set in this workspace.");
    } else {
      const name = input.setName ?? "";
      await BoundarySet.findOrCreate({ where: { workspaceId: member.workspace.id, name }, defaults: { workspaceId: member.workspace.id, name, createdBy: member.user.id }, transaction });
      set = await BoundarySet.findOne({ where: { workspaceId: member.workspace.id, name }, transaction, lock: transaction.LOCK.UPDATE });
      if (!set) throw new Error(`boundary set '${name}' vanished while it was created`);
    }
    const same = await BoundaryVersion.findOne({ where: { boundarySetId: set.id, sha256: upload.sha256, state: { [Op.ne]: "rejected" } }, transaction });
    if (same) throw new ConflictError(`This file is already version ${same.version} of boundary set '${set.name}' (${same.state}).`);
    const version = await nextVersion("boundary_versions", "boundary_set_id", set.id, transaction);
    const row = await BoundaryVersion.create(
      {
        boundarySetId: set.id,
        version,
        uploadId: upload.id,
        s3Key: upload.s3Key,
        fileName: upload.fileName,
        byteSize: Number(upload.declaredSize),
        sha256: upload.sha256,
        format: /\.geojson$/i.test(upload.fileName) ? "geojson" : "topojson",
        objectName: input.objectName,
        idProperty: input.idProperty,
        nameProperty: input.nameProperty ?? null,
        regionCount: null,
        report: null,
        diff: null,
        createdBy: member.user.id,
        validatedAt: null,
        publishedAt: null,
        archivedAt: null,
      },
      { transaction },
    );
    await giveVersionItsOwnCopy(row, "boundaries", member.workspace.id, upload, transaction);
    await auditMember(
      member,
      {
        action: "version.submitted",
        target: versionTarget("boundaries", set.name, version),
        detail: { kind: "boundaries", versionId: row.id, uploadId: upload.id, fileName: upload.fileName, size: Number(upload.declaredSize), objectName: input.objectName, idProperty: input.idProperty },
      },
      transaction,
    );
    return { id: row.id, version, parentId: set.id };
  });
  const jobId = options.enqueueJob === false ? null : await enqueue("intake-validate", { kind: "boundaries", versionId: created.id });
  return { kind: "boundaries", ...created, jobId };
}

/** Records a panel version (state uploaded) from a received upload, remembers its mapping, and queues its validation. */
export async function createPanelVersion(member: MemberContext, input: CreatePanelVersionInput, options: { enqueueJob?: boolean } = {}): Promise<CreatedVersion> {
  const upload = await receivedUpload(member, input.uploadId, "panel");
  const { Panel, PanelVersion, BoundarySet, BoundaryVersion, ColumnMappingMemory } = models();
  const header = input.remember ? (await readPanelHeader((await getObjectStream(upload.s3Key)) as Readable)).header : null;
  const created = await db().transaction(async (transaction) => {
    await holdUpload(upload.id, transaction);
    let panel;
    if (input.panelId !== undefined) {
      panel = await Panel.findOne({ where: { id: input.panelId, workspaceId: member.workspace.id }, transaction, lock: transaction.LOCK.UPDATE });
      if (!panel) throw new NotFoundError("There is no such panel in this workspace.");
    } else {
      const name = input.panelName ?? "";
      const set = await BoundarySet.findOne({ where: { id: input.boundarySetId, workspaceId: member.workspace.id }, transaction });
      if (!set) throw new NotFoundError("There is no such boundary set in this workspace.");
      const existing = await Panel.findOne({ where: { workspaceId: member.workspace.id, name }, transaction });
      if (existing && existing.boundarySetId !== set.id) {
        throw new ConflictError(`Panel '${name}' already exists and uses another boundary set; choose it from the list or pick a new name.`);
      }
      await Panel.findOrCreate({
        where: { workspaceId: member.workspace.id, name },
        defaults: { workspaceId: member.workspace.id, name, boundarySetId: set.id, createdBy: member.user.id },
        transaction,
      });
      panel = await Panel.findOne({ where: { workspaceId: member.workspace.id, name }, transaction, lock: transaction.LOCK.UPDATE });
      if (!panel) throw new Error(`panel '${name}' vanished while it was created`);
    }
    let boundaryVersion;
    if (input.boundaryVersionId !== undefined) {
      boundaryVersion = await BoundaryVersion.findOne({ where: { id: input.boundaryVersionId, boundarySetId: panel.boundarySetId }, transaction });
      if (!boundaryVersion) throw new NotFoundError("That boundary version does not belong to this panel's boundary set.");
      if (boundaryVersion.state !== "validated" && boundaryVersion.state !== "published") {
        throw new ConflictError(`Boundary version ${boundaryVersion.version} is ${boundaryVersion.state}; a panel can only be matched against validated or published boundaries.`);
      }
    } else {
      boundaryVersion =
        (await BoundaryVersion.findOne({ where: { boundarySetId: panel.boundarySetId, state: "published" }, order: [["version", "DESC"]], transaction })) ??
        (await BoundaryVersion.findOne({ where: { boundarySetId: panel.boundarySetId, state: "validated" }, order: [["version", "DESC"]], transaction }));
      if (!boundaryVersion) throw new ConflictError("The panel's boundary set has no validated boundaries yet; upload and validate boundaries first.");
    }
    const same = await PanelVersion.findOne({ where: { panelId: panel.id, sha256: upload.sha256, state: { [Op.ne]: "rejected" } }, transaction });
    if (same) throw new ConflictError(`This file is already version ${same.version} of panel '${panel.name}' (${same.state}).`);
    const version = await nextVersion("panel_versions", "panel_id", panel.id, transaction);
    const row = await PanelVersion.create(
      {
        panelId: panel.id,
        version,
        uploadId: upload.id,
        s3Key: upload.s3Key,
        fileName: upload.fileName,
        byteSize: Number(upload.declaredSize),
        sha256: upload.sha256,
        layout: input.mapping.layout,
        decimalSeparator: input.decimal,
        mapping: input.mapping,
        boundaryVersionId: boundaryVersion.id,
        rowCount: null,
        report: null,
        diff: null,
        createdBy: member.user.id,
        validatedAt: null,
        publishedAt: null,
        archivedAt: null,
      },
      { transaction },
    );
    await giveVersionItsOwnCopy(row, "panel", member.workspace.id, upload, transaction);
    if (header) {
      const signature = headerSignature(header);
      const [memory, createdMemory] = await ColumnMappingMemory.findOrCreate({
        where: { workspaceId: member.workspace.id, headerSignature: signature },
        defaults: { workspaceId: member.workspace.id, headerSignature: signature, layout: input.mapping.layout, mapping: input.mapping },
        transaction,
      });
      if (!createdMemory) await memory.update({ layout: input.mapping.layout, mapping: input.mapping }, { transaction });
    }
    await auditMember(
      member,
      {
        action: "version.submitted",
        target: versionTarget("panel", panel.name, version),
        detail: {
          kind: "panel",
          versionId: row.id,
          uploadId: upload.id,
          fileName: upload.fileName,
          size: Number(upload.declaredSize),
          layout: input.mapping.layout,
          boundaryVersionId: boundaryVersion.id,
        },
      },
      transaction,
    );
    return { id: row.id, version, parentId: panel.id };
  });
  const jobId = options.enqueueJob === false ? null : await enqueue("intake-validate", { kind: "panel", versionId: created.id });
  return { kind: "panel", ...created, jobId };
}

async function lockVersion(member: MemberContext, kind: VersionKind, versionId: number, transaction: import("sequelize").Transaction) {
  const table = kind === "panel" ? "panel_versions" : "boundary_versions";
  const join = kind === "panel" ? "JOIN panels parent ON parent.id = v.panel_id" : "JOIN boundary_sets parent ON parent.id = v.boundary_set_id";
  const rows = await db().query<{ id: number; state: string; version: number; boundary_version_id: number | null; parent_name: string }>(
    `SELECT v.id, v.state, v.version, ${kind === "panel" ? "v.boundary_version_id" : "NULL AS boundary_version_id"}, parent.name AS parent_name
       FROM ${table} v ${join} WHERE v.id = :versionId AND parent.workspace_id = :workspaceId FOR UPDATE OF v`,
    { replacements: { versionId, workspaceId: member.workspace.id }, type: QueryTypes.SELECT, transaction },
  );
  const row = rows[0];
  if (!row) throw new NotFoundError(kind === "panel" ? "There is no such panel version in this workspace." : "There is no such boundary version in this workspace.");
  return row;
}

/** validated → published. A panel version needs its boundary version published first. */
export async function publishVersion(member: MemberContext, kind: VersionKind, versionId: number): Promise<{ state: "published" }> {
  await db().transaction(async (transaction) => {
    const row = await lockVersion(member, kind, versionId, transaction);
    if (row.state !== "validated") {
      throw new ConflictError(`Version ${row.version} of '${row.parent_name}' is ${row.state}; only a validated version can be published.`);
    }
    if (kind === "panel" && row.boundary_version_id !== null) {
      const b = await db().query<{ state: string; version: number }>("SELECT state, version FROM boundary_versions WHERE id = :id", {
        replacements: { id: row.boundary_version_id },
        type: QueryTypes.SELECT,
        transaction,
      });
      if (b[0]?.state !== "published") {
        throw new ConflictError(`This panel was matched against boundary version ${b[0]?.version ?? "?"}, which is ${b[0]?.state ?? "missing"}; publish those boundaries first.`);
      }
    }
    const table = kind === "panel" ? "panel_versions" : "boundary_versions";
    await db().query(`UPDATE ${table} SET state = 'published', published_at = now(), updated_at = now() WHERE id = :id`, { replacements: { id: versionId }, transaction });
    await auditMember(
      member,
      { action: "version.published", target: versionTarget(kind, row.parent_name, row.version), detail: { kind, versionId, boundaryVersionId: row.boundary_version_id } },
      transaction,
    );
  });
  return { state: "published" };
}

/** validated or published → archived. Boundaries still used by a published panel version cannot be archived. */
export async function archiveVersion(member: MemberContext, kind: VersionKind, versionId: number): Promise<{ state: "archived" }> {
  await db().transaction(async (transaction) => {
    const row = await lockVersion(member, kind, versionId, transaction);
    if (row.state !== "validated" && row.state !== "published") {
      throw new ConflictError(`Version ${row.version} of '${row.parent_name}' is ${row.state}; only validated or published versions can be archived.`);
    }
    if (kind === "boundaries") {
      const users = await db().query<{ name: string; version: number }>(
        `SELECT p.name, pv.version FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
          WHERE pv.boundary_version_id = :id AND pv.state = 'published' ORDER BY p.name, pv.version LIMIT 3`,
        { replacements: { id: versionId }, type: QueryTypes.SELECT, transaction },
      );
      if (users.length > 0) {
        throw new ConflictError(`These boundaries are used by published panel versions (${users.map((u) => `'${u.name}' v${u.version}`).join(", ")}); archive those first.`);
      }
    }
    const table = kind === "panel" ? "panel_versions" : "boundary_versions";
    await db().query(`UPDATE ${table} SET state = 'archived', archived_at = now(), updated_at = now() WHERE id = :id`, { replacements: { id: versionId }, transaction });
    await auditMember(member, { action: "version.archived", target: versionTarget(kind, row.parent_name, row.version), detail: { kind, versionId, from: row.state } }, transaction);
  });
  return { state: "archived" };
}

// ---------------------------------------------------------------- indicators

const INDICATOR_FIELDS = ["label", "unit", "description", "source", "higherIsBetter"] as const satisfies readonly (keyof IndicatorPatch)[];

/**
 * Checks a steward's rate declaration for indicator `code` (not its own events
 * or population, checked before): no chain with the workspace's other rates, and both codes
 * indicators of one panel (a validated or published version holds both).
 */
async function checkRateDeclaration(workspaceId: number, code: string, rate: RateSpec, transaction: Transaction): Promise<void> {
  const others = (await rateDeclarationsOf(workspaceId, transaction)).filter((d) => d.indicator !== code);
  const problem = declarationProblem({ indicator: code, ...rate }, others);
  if (problem !== null) throw new IntakeInputError(`rate: ${problem}`, "rate");
  const together = await db().query<{ n: number }>(
    `SELECT 1 AS n FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
      WHERE p.workspace_id = :workspaceId AND pv.state IN ('validated', 'published')
        AND EXISTS (SELECT 1 FROM observations o WHERE o.panel_version_id = pv.id AND o.indicator_code = :events)
        AND EXISTS (SELECT 1 FROM observations o WHERE o.panel_version_id = pv.id AND o.indicator_code = :population)
      LIMIT 1`,
    { replacements: { workspaceId, events: rate.events, population: rate.population }, type: QueryTypes.SELECT, transaction },
  );
  if (together.length === 0) {
    throw new IntakeInputError(`rate: '${rate.events}' and '${rate.population}' are not both indicators of one panel of this workspace (a validated or published version)`, "rate");
  }
}

/** Creates or updates one indicator's metadata (and, when `rate` is given, its rate declaration). */
export async function saveIndicator(member: MemberContext, code: string, patch: IndicatorPatch) {
  const parsed = indicatorCodeSchema.safeParse(code);
  if (!parsed.success) throw new IntakeInputError(`code: ${parsed.error.issues[0]?.message ?? "not an indicator code"}`, "code");
  const trimmed = parsed.data;
  const { Indicator } = models();
  const { rate, ...fields } = patch;
  if (rate && (rate.events === trimmed || rate.population === trimmed)) {
    const role = rate.events === trimmed ? "events" : "population";
    throw new IntakeInputError(`rate: '${trimmed}' cannot be its own ${role}`, `rate.${role}`);
  }
  return db().transaction(async (transaction) => {
    // One declaration at a time per workspace, so two stewards cannot chain rates past each other's check.
    await db().query("SELECT pg_advisory_xact_lock(hashtext('indicator-rates'), :workspaceId)", { replacements: { workspaceId: member.workspace.id }, transaction });
    const rateColumns =
      rate === undefined
        ? {}
        : { rateEventsCode: rate?.events ?? null, ratePopulationCode: rate?.population ?? null, rateMultiplier: rate?.multiplier ?? null };
    const [row, created] = await Indicator.findOrCreate({
      where: { workspaceId: member.workspace.id, code: trimmed },
      defaults: { workspaceId: member.workspace.id, code: trimmed, ...fields, ...rateColumns },
      transaction,
    });
    // A declaration is checked when it is new or changed (saving a label keeps a rate whose panel was archived since).
    if (rate && (created || !sameRate(rateOfRow(row), rate))) await checkRateDeclaration(member.workspace.id, trimmed, rate, transaction);
    // Field names only: the values are the steward's text and stay in the indicators table.
    const changed: string[] = INDICATOR_FIELDS.filter((field) => created || row[field] !== fields[field]);
    if (rate !== undefined && (created ? rate !== null : !sameRate(rateOfRow(row), rate))) changed.push("rate");
    if (!created) await row.update({ ...fields, ...rateColumns }, { transaction });
    await auditMember(member, { action: "indicator.updated", target: `indicator "${trimmed}"`, detail: { code: trimmed, created, changed } }, transaction);
    return {
      code: row.code,
      label: row.label,
      unit: row.unit,
      description: row.description,
      source: row.source,
      higherIsBetter: row.higherIsBetter,
      rate: rateOfRow(row),
    };
  });
}

function rateOfRow(row: { rateEventsCode: string | null; ratePopulationCode: string | null; rateMultiplier: number | null }): RateSpec | null {
  if (row.rateEventsCode === null || row.ratePopulationCode === null || row.rateMultiplier === null) return null;
  return { events: row.rateEventsCode, population: row.ratePopulationCode, multiplier: row.rateMultiplier as RateSpec["multiplier"] };
}

function sameRate(a: RateSpec | null, b: RateSpec | null): boolean {
  if (a === null || b === null) return a === b;
  return a.events === b.events && a.population === b.population && a.multiplier === b.multiplier;
}

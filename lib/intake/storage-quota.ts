/**
 * Per-workspace storage quota (WORKSPACE_STORAGE_QUOTA_MB). What counts is
 * what the workspace holds or has been promised in the file store: the
 * declared sizes of uploads still pending (a signed URL may still bring the
 * bytes) and of received ones, plus each version's own copy of its file.
 * Failed uploads hold no object (completion deletes it), so they do not count.
 *
 * The rule (quotaRefusal) is pure; workspaceStorageUsed reads the database.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { db } from "@/lib/db";
import { HttpError } from "@/lib/http/errors";

const MB = 1024 * 1024;

/** An upload that would take the workspace over its quota (HTTP 413). */
export class StorageQuotaError extends HttpError {
  constructor(
    message: string,
    readonly usedBytes: number,
    readonly quotaBytes: number,
  ) {
    super(413, message, { field: "size", usedBytes, quotaBytes });
    this.name = "StorageQuotaError";
  }
}

/** Bytes as MB with one decimal ("0.1 MB" at least for anything non-zero). */
export function formatMegabytes(bytes: number): string {
  if (bytes === 0) return "0 MB";
  const mb = Math.max(0.1, Math.round((bytes / MB) * 10) / 10);
  return `${mb.toLocaleString("en", { maximumFractionDigits: 1 })} MB`;
}

export interface QuotaInput {
  workspaceName: string;
  /** Bytes the workspace already uses (workspaceStorageUsed). */
  usedBytes: number;
  /** Declared size of the new upload. */
  requestBytes: number;
  quotaMb: number;
  /** UPLOAD_ABANDON_HOURS, to say when unused uploads free their space. */
  abandonAfterHours: number;
}

/**
 * The refusal for an upload that would exceed the quota, or null when it fits
 * (using exactly the quota is allowed).
 */
export function quotaRefusal(input: QuotaInput): StorageQuotaError | null {
  if (!Number.isFinite(input.quotaMb) || input.quotaMb <= 0) throw new Error(`quotaMb must be a positive number of megabytes (got ${input.quotaMb})`);
  const quotaBytes = input.quotaMb * MB;
  if (input.usedBytes + input.requestBytes <= quotaBytes) return null;
  return new StorageQuotaError(
    `Workspace '${input.workspaceName}' uses ${formatMegabytes(input.usedBytes)} of its ${formatMegabytes(quotaBytes)} of file storage, ` +
      `so this ${formatMegabytes(input.requestBytes)} file does not fit. ` +
      `Failed and unused uploads are removed ${input.abandonAfterHours} hours after they were started; ` +
      `to make room sooner, ask the operator to raise WORKSPACE_STORAGE_QUOTA_MB.`,
    input.usedBytes,
    quotaBytes,
  );
}

/** Bytes the workspace holds or has been promised in the file store (see the module comment). */
export async function workspaceStorageUsed(workspaceId: number, transaction?: Transaction): Promise<number> {
  const [row] = await db().query<{ used: string | null }>(
    `SELECT (
        COALESCE((SELECT sum(u.declared_size) FROM uploads u WHERE u.workspace_id = :workspaceId AND u.state IN ('pending','received')), 0)
      + COALESCE((SELECT sum(v.byte_size) FROM boundary_versions v JOIN boundary_sets s ON s.id = v.boundary_set_id
                   WHERE s.workspace_id = :workspaceId AND v.file_key IS NOT NULL), 0)
      + COALESCE((SELECT sum(v.byte_size) FROM panel_versions v JOIN panels p ON p.id = v.panel_id
                   WHERE p.workspace_id = :workspaceId AND v.file_key IS NOT NULL), 0)
      )::text AS used`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT, transaction },
  );
  return Number(row?.used ?? 0);
}

// First key of the two-key advisory lock that serialises quota checks per workspace (the second is the workspace id).
const QUOTA_LOCK_CLASS = 0x7e55_0001;

/** Takes the workspace's quota lock until `transaction` ends, so two uploads started together cannot both squeeze in. */
export async function lockWorkspaceQuota(workspaceId: number, transaction: Transaction): Promise<void> {
  await db().query("SELECT pg_advisory_xact_lock(:lockClass, :workspaceId)", { replacements: { lockClass: QUOTA_LOCK_CLASS, workspaceId }, transaction });
}

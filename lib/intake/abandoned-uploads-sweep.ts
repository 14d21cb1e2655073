/**
 * The sweep of abandoned uploads — pending, failed, or received and never
 * used (rule: abandoned-uploads.ts) — run daily by the `uploads-sweep` job.
 * For each: lock its row, remove its object from S3 if there is one, then
 * delete the row, in that order and in one transaction, so a row disappears
 * only once its object is gone or known to be absent. When the store fails,
 * the row stays for the next sweep.
 */
import { QueryTypes, type Transaction } from "sequelize";
import { env } from "@/lib/config/env";
import { db } from "@/lib/db";
import { StorageUnavailableError } from "@/lib/storage/errors";
import { bucket, deleteObject, headObject } from "@/lib/storage/s3";
import type { UploadState } from "@/models/intake-types";
import { abandonCutoff, emptySweepReport, isAbandoned, type UploadSweepReport } from "./abandoned-uploads";

/** Uploads looked at per sweep, oldest first; any beyond wait for the next sweep. */
export const SWEEP_LIMIT = 1000;

// A version names its upload (upload_id); rows made before versions had their
// own copies read the upload's object itself (s3_key), so either keeps it.
const REFERENCED_SQL = `(
  EXISTS (SELECT 1 FROM boundary_versions v WHERE v.upload_id = u.id OR v.s3_key = u.s3_key)
  OR EXISTS (SELECT 1 FROM panel_versions v WHERE v.upload_id = u.id OR v.s3_key = u.s3_key)
)`;

type CandidateRow = { id: string; s3_key: string; state: UploadState; created_at: Date; expires_at: Date; referenced: boolean };

/** A failed S3 call; the transaction around it rolls back and the row stays. */
class StoreFailure extends Error {
  constructor(readonly failure: unknown) {
    super(failure instanceof StorageUnavailableError ? failure.detail : failure instanceof Error ? failure.message : String(failure));
    this.name = "StoreFailure";
  }
}

async function storeCall<T>(call: () => Promise<T>): Promise<T> {
  try {
    return await call();
  } catch (err) {
    throw new StoreFailure(err);
  }
}

/**
 * Removes one abandoned upload: its object (if any), then its row. The row is
 * locked and the rule's database-side conditions checked again first, so an
 * upload named by a new version since it was read is kept (a version being
 * made holds its upload's row, which SKIP LOCKED passes over).
 */
async function removeUpload(id: string, now: Date, cutoff: Date): Promise<"object removed" | "no object" | "in use"> {
  return db().transaction(async (transaction: Transaction) => {
    const [row] = await db().query<{ s3_key: string }>(
      `SELECT u.s3_key FROM uploads u
        WHERE u.id = :id AND u.created_at < :cutoff AND u.expires_at <= :now AND NOT ${REFERENCED_SQL}
        FOR UPDATE OF u SKIP LOCKED`,
      { replacements: { id, cutoff, now }, type: QueryTypes.SELECT, transaction },
    );
    if (!row) return "in use";
    const head = await storeCall(() => headObject(row.s3_key));
    if (head) await storeCall(() => deleteObject(row.s3_key));
    await db().query("DELETE FROM uploads WHERE id = :id", { replacements: { id }, transaction });
    return head ? "object removed" : "no object";
  });
}

export interface SweepOptions {
  now?: Date;
  /** Default UPLOAD_ABANDON_HOURS (24). */
  abandonAfterHours?: number;
  limit?: number;
  /** Where the line about a failing store goes (default console.warn). */
  log?: (line: string) => void;
}

/**
 * Deletes abandoned uploads and their objects and says what it did. A store
 * outage stops the sweep's calls to S3 (the remaining uploads are kept and
 * counted) and logs one line naming the store; database errors throw.
 */
export async function sweepAbandonedUploads(options: SweepOptions = {}): Promise<UploadSweepReport> {
  const now = options.now ?? new Date();
  const hours = options.abandonAfterHours ?? env().UPLOAD_ABANDON_HOURS;
  const cutoff = abandonCutoff(now, hours);
  const log = options.log ?? ((line: string) => console.warn(line));
  // Uploads a version names are left out here, not just kept below: they stay for good, and the oldest
  // first window would otherwise fill with them and never reach newer unused ones.
  const candidates = await db().query<CandidateRow>(
    `SELECT u.id, u.s3_key, u.state, u.created_at, u.expires_at, ${REFERENCED_SQL} AS referenced
       FROM uploads u WHERE u.created_at < :cutoff AND NOT ${REFERENCED_SQL} ORDER BY u.created_at, u.id LIMIT :limit`,
    { replacements: { cutoff, limit: options.limit ?? SWEEP_LIMIT }, type: QueryTypes.SELECT },
  );
  const report = emptySweepReport();
  let firstFailure: StoreFailure | null = null;
  let storeDown = false;
  for (const c of candidates) {
    report.examined++;
    if (!isAbandoned({ state: c.state, createdAt: c.created_at, expiresAt: c.expires_at, referencedByVersion: c.referenced }, now, hours)) {
      report.keptInUse++;
      continue;
    }
    // Once the store is down, every further call would wait for its own timeout and fail the same way.
    if (storeDown) {
      report.keptStoreFailed++;
      continue;
    }
    try {
      const outcome = await removeUpload(c.id, now, cutoff);
      if (outcome === "in use") report.keptInUse++;
      else report.deleted++;
      if (outcome === "object removed") report.objectsRemoved++;
    } catch (err) {
      if (!(err instanceof StoreFailure)) throw err;
      report.keptStoreFailed++;
      firstFailure ??= err;
      if (err.failure instanceof StorageUnavailableError) storeDown = true;
    }
  }
  if (firstFailure) {
    log(
      `uploads sweep: kept ${report.keptStoreFailed} abandoned upload(s) because the file store (S3 bucket "${bucket()}" at ${env().S3_ENDPOINT}) ` +
        `${storeDown ? "is unavailable" : "refused"}; the next sweep tries them again. First failure: ${firstFailure.message}`,
    );
  }
  return report;
}

/**
 * Which uploads are abandoned: pure rules, no database and no S3. The sweep
 * that acts on them (deletes the object, then the row) is
 * abandoned-uploads-sweep.ts; the queue `uploads-sweep` runs it daily.
 *
 * A ticket (POST …/intake/uploads) records a pending upload and signs a PUT
 * URL; only POST …/complete moves it to received (or failed). Three kinds of
 * upload are left behind, each holding storage (and quota) for nothing: a
 * browser that closed half way leaves a pending row, perhaps with an object;
 * a failed check leaves a failed row; a received file that never became a
 * version leaves a received row and its object. A version keeps its own copy
 * of its file, but an upload a version names is still never swept.
 */
import type { UploadState } from "@/models/intake-types";

/** What the rule needs to know about one upload. */
export interface UploadForSweep {
  state: UploadState;
  createdAt: Date;
  /** When its presigned PUT URL stops working. */
  expiresAt: Date;
  /** A boundary or panel version names this upload (or its object). */
  referencedByVersion: boolean;
}

/** Why an upload is left alone, or null when it is abandoned. */
export type KeepReason = "referenced by a version" | "too recent" | "upload URL still valid";

/** Uploads created before this instant may be abandoned. */
export function abandonCutoff(now: Date, abandonAfterHours: number): Date {
  if (!Number.isFinite(abandonAfterHours) || abandonAfterHours <= 0) throw new Error(`abandonAfterHours must be a positive number of hours (got ${abandonAfterHours})`);
  return new Date(now.getTime() - abandonAfterHours * 3_600_000);
}

/**
 * Why `upload` must be kept at `now`, or null when it is abandoned: in any
 * state (pending, failed, or received but never used), created more than
 * `abandonAfterHours` ago, its PUT URL expired (so no browser can still be
 * sending it), and named by no version.
 *
 * @example keepReason({ state: "failed", createdAt: twoDaysAgo, expiresAt: twoDaysAgo, referencedByVersion: false }, now, 24); // null
 */
export function keepReason(upload: UploadForSweep, now: Date, abandonAfterHours: number): KeepReason | null {
  if (upload.referencedByVersion) return "referenced by a version";
  if (upload.createdAt.getTime() >= abandonCutoff(now, abandonAfterHours).getTime()) return "too recent";
  if (upload.expiresAt.getTime() > now.getTime()) return "upload URL still valid";
  return null;
}

export function isAbandoned(upload: UploadForSweep, now: Date, abandonAfterHours: number): boolean {
  return keepReason(upload, now, abandonAfterHours) === null;
}

/** What one sweep did. examined = deleted + keptInUse + keptStoreFailed. */
export interface UploadSweepReport {
  /** Uploads older than the cutoff, named by no version, that the sweep looked at (any state). */
  examined: number;
  /** Rows removed (each after its object was removed or found absent). */
  deleted: number;
  /** Objects removed from the store (the other deleted rows had none). */
  objectsRemoved: number;
  /** Kept because a version came to name them while the sweep ran, or their URL is still valid. */
  keptInUse: number;
  /** Kept because the file store failed; the next sweep tries them again. */
  keptStoreFailed: number;
}

export function emptySweepReport(): UploadSweepReport {
  return { examined: 0, deleted: 0, objectsRemoved: 0, keptInUse: 0, keptStoreFailed: 0 };
}

/** One log line for a sweep. */
export function describeSweep(report: UploadSweepReport, abandonAfterHours: number): string {
  return (
    `${report.examined} pending, failed or unused upload(s) older than ${abandonAfterHours} h: ${report.deleted} deleted (${report.objectsRemoved} stored file(s) removed), ` +
    `${report.keptInUse} kept in use, ${report.keptStoreFailed} kept because the file store failed`
  );
}

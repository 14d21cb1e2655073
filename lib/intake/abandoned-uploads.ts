/**
 * Which upload tickets are abandoned: pure rules, no database and no S3. The
 * sweep that acts on them (deletes the object, then the row) is
 * abandoned-uploads-sweep.ts; the queue `uploads-sweep` runs it daily.
 *
 * A ticket (POST …/intake/uploads) records a pending upload and signs a PUT
 * URL; only POST …/complete moves it to received. A browser that closes half
 * way, or a PUT that reached the store but was never completed, leaves a
 * pending row, and perhaps an object that nothing references.
 */
import type { UploadState } from "@/models/intake-types";

/** What the rule needs to know about one upload. */
export interface UploadForSweep {
  state: UploadState;
  createdAt: Date;
  /** When its presigned PUT URL stops working. */
  expiresAt: Date;
  /** A boundary or panel version names this upload (or its object): the object is that version's file. */
  referencedByVersion: boolean;
}

/** Why an upload is left alone, or null when it is abandoned. */
export type KeepReason = "not pending" | "referenced by a version" | "too recent" | "upload URL still valid";

/** Uploads created before this instant may be abandoned. */
export function abandonCutoff(now: Date, abandonAfterHours: number): Date {
  if (!Number.isFinite(abandonAfterHours) || abandonAfterHours <= 0) throw new Error(`abandonAfterHours must be a positive number of hours (got ${abandonAfterHours})`);
  return new Date(now.getTime() - abandonAfterHours * 3_600_000);
}

/**
 * Why `upload` must be kept at `now`, or null when it is abandoned: still
 * pending, created more than `abandonAfterHours` ago, its PUT URL expired
 * (so no browser can still be sending it), and named by no version.
 * Received and failed uploads are never abandoned.
 *
 * @example keepReason({ state: "pending", createdAt: twoDaysAgo, expiresAt: twoDaysAgo, referencedByVersion: false }, now, 24); // null
 */
export function keepReason(upload: UploadForSweep, now: Date, abandonAfterHours: number): KeepReason | null {
  if (upload.state !== "pending") return "not pending";
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
  /** Pending uploads older than the cutoff that the sweep looked at. */
  examined: number;
  /** Rows removed (each after its object was removed or found absent). */
  deleted: number;
  /** Objects removed from the store (the other deleted rows had none). */
  objectsRemoved: number;
  /** Kept because a version names them, their URL is still valid, or they were completed while the sweep ran. */
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
    `${report.examined} pending upload(s) older than ${abandonAfterHours} h: ${report.deleted} deleted (${report.objectsRemoved} stored file(s) removed), ` +
    `${report.keptInUse} kept in use, ${report.keptStoreFailed} kept because the file store failed`
  );
}

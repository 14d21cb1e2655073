// Kept apart from s3.ts so that errorResponse (lib/http/route.ts) can map the error to a 503
// without pulling the AWS SDK into every route.
import { unavailableDigest } from "@/lib/service-unavailable";

/** The file store (S3) did not answer or answered with a server error; the request may succeed later (HTTP 503). */
export class StorageUnavailableError extends Error {
  readonly status = 503;
  /** Survives Next's production redaction, so an error screen can say which service is down. */
  readonly digest = unavailableDigest("file-store");
  constructor(
    message: string,
    /** What was attempted and where, for the server log (the message is for the user). */
    readonly detail: string,
  ) {
    super(message);
    this.name = "StorageUnavailableError";
  }
}

// Node socket errors that mean "nobody answered" rather than "the store said no".
const NETWORK_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "ETIMEDOUT", "EHOSTUNREACH", "ENETUNREACH", "ENOTFOUND", "EAI_AGAIN", "EPIPE", "ECONNABORTED"]);
const NETWORK_MESSAGE = new RegExp(`\\b(${[...NETWORK_CODES].join("|")})\\b|socket hang up`);

/**
 * True when an S3 call failed because the store is down or overloaded:
 * a refused or dropped connection, a timeout, or an HTTP 5xx. A 4xx (no such
 * key, access denied, bad signature) is an answer, not an outage.
 */
export function isStorageOutage(error: unknown): boolean {
  for (let e: unknown = error, depth = 0; e && typeof e === "object" && depth < 5; depth++) {
    const o = e as { code?: unknown; name?: unknown; message?: unknown; $metadata?: { httpStatusCode?: number }; cause?: unknown; errors?: unknown };
    const status = o.$metadata?.httpStatusCode;
    if (typeof status === "number") return status >= 500;
    if (typeof o.code === "string" && NETWORK_CODES.has(o.code)) return true;
    // The SDK re-wraps a socket error it does not recognise as an Error (one from another realm) by its text alone.
    if (typeof o.message === "string" && NETWORK_MESSAGE.test(o.message)) return true;
    if (o.name === "TimeoutError" || o.name === "RequestTimeout") return true;
    // Node's happy-eyeballs connect reports several refused attempts as one AggregateError.
    if (Array.isArray(o.errors) && o.errors.some((inner) => isStorageOutage(inner))) return true;
    e = o.cause;
  }
  return false;
}

/**
 * A version's stored file no longer has the checksum recorded when the version
 * was made: it was changed or damaged in the store. The bytes are never used;
 * the message names the version (HTTP 500: the fault is on the server's side,
 * and trying again will not help).
 */
export class StoredFileChecksumError extends Error {
  readonly status = 500;
  constructor(
    /** What was read, for the message: e.g. `panel version 3 of 'Jobs' (id 17)`. */
    readonly what: string,
    readonly objectKey: string,
    readonly expected: string,
    readonly actual: string,
  ) {
    super(
      `The stored file of ${what} does not match the checksum recorded when the version was made (found ${actual.slice(0, 12)}…, expected ${expected.slice(0, 12)}…): ` +
        `it was changed or damaged in storage, so it was not used. Upload the file again as a new version, or ask the operator to restore ${objectKey} from a backup.`,
    );
    this.name = "StoredFileChecksumError";
  }
}

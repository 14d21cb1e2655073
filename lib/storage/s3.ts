import { CopyObjectCommand, DeleteObjectCommand, GetObjectCommand, HeadObjectCommand, PutObjectCommand, S3Client, S3ServiceException } from "@aws-sdk/client-s3";
import { getSignedUrl } from "@aws-sdk/s3-request-presigner";
import { PassThrough, type Readable } from "node:stream";
import { z } from "zod";
import { env } from "@/lib/config/env";
import { StorageUnavailableError, isStorageOutage } from "./errors";

const globalForS3 = globalThis as unknown as { tesseraS3?: S3Client };

/**
 * The S3 client from S3_* settings. Against s3rver path-style addressing is
 * needed, and checksums only when required: otherwise streamed uploads are
 * stored with chunk framing inside and presigned URLs sign an empty body.
 */
export function s3Client(): S3Client {
  if (!globalForS3.tesseraS3) {
    const e = env();
    globalForS3.tesseraS3 = new S3Client({
      endpoint: e.S3_ENDPOINT,
      region: e.S3_REGION,
      forcePathStyle: e.S3_FORCE_PATH_STYLE,
      credentials: { accessKeyId: e.S3_ACCESS_KEY_ID, secretAccessKey: e.S3_SECRET_ACCESS_KEY },
      requestChecksumCalculation: "WHEN_REQUIRED",
      responseChecksumValidation: "WHEN_REQUIRED",
      // Without a connect timeout a store that drops packets hangs the request for minutes;
      // socketTimeout ends a stalled transfer (large streamed GETs keep the socket busy, so it does not fire on them).
      requestHandler: { connectionTimeout: 5_000, socketTimeout: 60_000 },
    });
  }
  return globalForS3.tesseraS3;
}

export function bucket(): string {
  return env().S3_BUCKET;
}

/** Object keys: relative, no "..", no control characters. */
export const objectKeySchema = z
  .string()
  .min(1, "object key is empty")
  .max(1024, "object key is longer than 1024 bytes")
  .refine((k) => !k.startsWith("/"), "object key must not start with /")
  .refine((k) => !k.split("/").includes(".."), "object key must not contain ..")
  .refine((k) => !/[\u0000-\u001f\u007f]/.test(k), "object key contains control characters");

const contentTypeSchema = z.string().min(3).max(255).regex(/^[\w.+-]+\/[\w.+-]+(\s*;.*)?$/, "not a MIME type");
const expiresSchema = z.number().int().min(1).max(7 * 24 * 3600);

function key(k: string): string {
  const parsed = objectKeySchema.safeParse(k);
  if (!parsed.success) throw new Error(`S3 key "${k}": ${parsed.error.issues[0]?.message}`);
  return parsed.data;
}

function where(k: string): string {
  return `s3://${bucket()}/${k} at ${env().S3_ENDPOINT}`;
}

type Action = "PUT" | "GET" | "HEAD" | "DELETE" | "COPY";
const WHAT_FAILED: Record<Action, string> = {
  PUT: "the file could not be stored",
  GET: "the file could not be read",
  HEAD: "the file could not be checked",
  DELETE: "the file could not be removed",
  COPY: "the file could not be copied",
};

/**
 * An outage (refused, timed out, 5xx) becomes a StorageUnavailableError whose
 * message is fit for the user (routes answer 503 with it); anything else keeps
 * the technical detail for the log.
 */
function wrap(action: Action, k: string, err: unknown): Error {
  const reason = err instanceof Error ? `${err.name}: ${err.message || ("code" in err ? String(err.code) : "")}` : String(err);
  const detail = `S3 ${action} ${where(k)} failed: ${reason}`;
  if (isStorageOutage(err)) {
    return new StorageUnavailableError(`The file store (S3 bucket "${bucket()}") is unavailable, so ${WHAT_FAILED[action]}. Try again in a few minutes.`, detail);
  }
  return new Error(detail);
}

/**
 * Signing is local, so a URL for a store that is down would only fail later in
 * the browser. One HEAD of the key first (any answer, even 403 or 404, means the
 * store is up) turns an outage into a StorageUnavailableError before the
 * caller records anything.
 */
async function assertStoreAnswers(k: string): Promise<void> {
  try {
    await s3Client().send(new HeadObjectCommand({ Bucket: bucket(), Key: k }));
  } catch (err) {
    if (isStorageOutage(err)) throw wrap("PUT", k, err);
  }
}

/**
 * A presigned PUT URL. The browser must send exactly `contentType` as its
 * Content-Type header (it is part of the signature). Throws
 * StorageUnavailableError when the store does not answer.
 */
export async function presignPut(objectKey: string, contentType: string, options: { expiresInSeconds?: number; contentLength?: number } = {}): Promise<string> {
  const k = key(objectKey);
  const type = contentTypeSchema.parse(contentType);
  const expiresIn = expiresSchema.parse(options.expiresInSeconds ?? 900);
  const length = options.contentLength === undefined ? undefined : z.number().int().min(0).parse(options.contentLength);
  await assertStoreAnswers(k);
  // Sign the Content-Type header too, so an upload with any other type is refused; with a
  // length, Content-Length as well, so S3 refuses a body of any other size before storing it.
  return getSignedUrl(s3Client(), new PutObjectCommand({ Bucket: bucket(), Key: k, ContentType: type, ContentLength: length }), {
    expiresIn,
    signableHeaders: new Set(length === undefined ? ["content-type"] : ["content-type", "content-length"]),
  });
}

/** A presigned GET URL; `downloadName` makes browsers save it under that file name. */
export async function presignGet(objectKey: string, options: { expiresInSeconds?: number; downloadName?: string } = {}): Promise<string> {
  const k = key(objectKey);
  const expiresIn = expiresSchema.parse(options.expiresInSeconds ?? 900);
  const disposition = options.downloadName ? `attachment; filename="${options.downloadName.replace(/["\\\r\n]/g, "_")}"` : undefined;
  return getSignedUrl(s3Client(), new GetObjectCommand({ Bucket: bucket(), Key: k, ResponseContentDisposition: disposition }), { expiresIn });
}

/** Server-side upload of a whole buffer or string. */
export async function putObject(objectKey: string, body: Buffer | Uint8Array | string, contentType = "application/octet-stream"): Promise<{ etag: string | null }> {
  const k = key(objectKey);
  try {
    const out = await s3Client().send(new PutObjectCommand({ Bucket: bucket(), Key: k, Body: body, ContentType: contentTypeSchema.parse(contentType) }));
    return { etag: out.ETag ?? null };
  } catch (err) {
    throw wrap("PUT", k, err);
  }
}

/**
 * A readable stream of the object's bytes (for streamed intake). Throws when
 * missing. The store failing part-way through (a dropped connection) errors
 * the stream with a StorageUnavailableError, as a failure before the first
 * byte does, so a route answers 503 rather than 500.
 */
export async function getObjectStream(objectKey: string): Promise<Readable> {
  const k = key(objectKey);
  let body: Readable;
  try {
    const out = await s3Client().send(new GetObjectCommand({ Bucket: bucket(), Key: k }));
    if (!out.Body) throw new Error("empty body");
    body = out.Body as Readable;
  } catch (err) {
    throw wrap("GET", k, err);
  }
  const guarded = new PassThrough();
  body.once("error", (err) => guarded.destroy(wrap("GET", k, err)));
  // A reader that stops early (a header preview) must not leave the connection open.
  guarded.once("close", () => {
    if (!body.destroyed) body.destroy();
  });
  return body.pipe(guarded);
}

/** The whole object in memory (small objects only). */
export async function getObjectBytes(objectKey: string): Promise<Buffer> {
  const k = key(objectKey);
  try {
    const out = await s3Client().send(new GetObjectCommand({ Bucket: bucket(), Key: k }));
    if (!out.Body) return Buffer.alloc(0);
    return Buffer.from(await out.Body.transformToByteArray());
  } catch (err) {
    throw wrap("GET", k, err);
  }
}

export type ObjectHead = { size: number; contentType: string | null; etag: string | null; lastModified: Date | null };

/** Size, type and ETag of an object, or null when there is no such object. */
export async function headObject(objectKey: string): Promise<ObjectHead | null> {
  const k = key(objectKey);
  try {
    const out = await s3Client().send(new HeadObjectCommand({ Bucket: bucket(), Key: k }));
    return { size: out.ContentLength ?? 0, contentType: out.ContentType ?? null, etag: out.ETag ?? null, lastModified: out.LastModified ?? null };
  } catch (err) {
    if (err instanceof S3ServiceException && (err.$metadata.httpStatusCode === 404 || err.name === "NotFound" || err.name === "NoSuchKey")) return null;
    throw wrap("HEAD", k, err);
  }
}

/**
 * Server-side copy inside the bucket (S3 CopyObject): the bytes never pass
 * through the app. Used to give a version its own copy of an upload under a
 * key no presigned URL was issued for. Throws when the source is missing.
 */
export async function copyObject(sourceKey: string, targetKey: string): Promise<{ etag: string | null }> {
  const from = key(sourceKey);
  const to = key(targetKey);
  try {
    // CopySource is "bucket/key" with the key URL-encoded segment by segment (the slashes stay).
    const source = `${bucket()}/${from.split("/").map(encodeURIComponent).join("/")}`;
    const out = await s3Client().send(new CopyObjectCommand({ Bucket: bucket(), Key: to, CopySource: source }));
    return { etag: out.CopyObjectResult?.ETag ?? null };
  } catch (err) {
    throw wrap("COPY", `${from} -> ${to}`, err);
  }
}

/** Deletes an object; deleting a missing object is not an error. */
export async function deleteObject(objectKey: string): Promise<void> {
  const k = key(objectKey);
  try {
    await s3Client().send(new DeleteObjectCommand({ Bucket: bucket(), Key: k }));
  } catch (err) {
    throw wrap("DELETE", k, err);
  }
}

/** Closes the client's sockets (tests). */
export function closeS3(): void {
  globalForS3.tesseraS3?.destroy();
  globalForS3.tesseraS3 = undefined;
}

/**
 * A boundary or panel version's own file. When a version is made from an
 * upload, the upload's object is copied (S3 CopyObject) to a key under
 * `workspaces/<id>/versions/<kind>/<versionId>/` for which no presigned URL is
 * ever issued, so a late PUT to the upload's still-valid URL changes nothing a
 * version uses. Every read of a version's file goes through the readers here,
 * which hash the bytes while they stream and refuse them when the SHA-256
 * differs from the one recorded on the version row.
 */
import { createHash } from "node:crypto";
import type { Readable } from "node:stream";
import { getObjectStream } from "@/lib/storage/s3";
import { StoredFileChecksumError } from "@/lib/storage/errors";
import type { UploadKind } from "@/models/intake-types";

const SHA256_HEX = /^[0-9a-f]{64}$/;

/** The key of a version's own copy of its source file. */
export function versionFileKey(workspaceId: number, kind: UploadKind, versionId: number, sha256: string): string {
  if (!Number.isInteger(workspaceId) || workspaceId <= 0) throw new Error(`versionFileKey: workspace id must be a positive integer (got ${workspaceId})`);
  if (!Number.isInteger(versionId) || versionId <= 0) throw new Error(`versionFileKey: version id must be a positive integer (got ${versionId})`);
  if (!SHA256_HEX.test(sha256)) throw new Error(`versionFileKey: '${sha256}' is not a lowercase hexadecimal SHA-256`);
  return `workspaces/${workspaceId}/versions/${kind}/${versionId}/${sha256}`;
}

/** The key of the TopoJSON made from a GeoJSON boundary file, beside the version's own copy. */
export function versionTopologyKey(fileKey: string, topologySha256: string): string {
  if (!SHA256_HEX.test(topologySha256)) throw new Error(`versionTopologyKey: '${topologySha256}' is not a lowercase hexadecimal SHA-256`);
  return `${fileKey.replace(/\/[^/]*$/, "")}/topology-${topologySha256}.json`;
}

export function sha256Hex(bytes: Uint8Array | string): string {
  return createHash("sha256").update(bytes).digest("hex");
}

/**
 * Passes `source` through, hashing it; when it ends, throws
 * StoredFileChecksumError unless the bytes had `expected` as their SHA-256.
 * A consumer that commits only after the last chunk (the panel ingest's
 * transaction) therefore never keeps anything read from a changed file.
 */
export async function* verifiedChunks(source: AsyncIterable<Uint8Array>, expected: string, what: string, objectKey: string): AsyncGenerator<Uint8Array> {
  const hash = createHash("sha256");
  for await (const chunk of source) {
    hash.update(chunk);
    yield chunk;
  }
  const actual = hash.digest("hex");
  if (actual !== expected) throw new StoredFileChecksumError(what, objectKey, expected, actual);
}

/** A version's file as a stream that fails at its end when the checksum differs (see verifiedChunks). */
export async function streamVersionFile(objectKey: string, expected: string, what: string): Promise<AsyncGenerator<Uint8Array>> {
  return verifiedChunks((await getObjectStream(objectKey)) as Readable, expected, what, objectKey);
}

/**
 * A version's whole file, hashed while it streams in; returned only when the
 * checksum matches. `expected` null is for rows made before the checksum of
 * their stored file was recorded: read as before, unverified.
 */
export async function readVersionFile(objectKey: string, expected: string | null, what: string): Promise<Buffer> {
  const chunks: Uint8Array[] = [];
  const stream = expected === null ? ((await getObjectStream(objectKey)) as Readable) : await streamVersionFile(objectKey, expected, what);
  for await (const chunk of stream) chunks.push(chunk as Uint8Array);
  return Buffer.concat(chunks);
}

/**
 * A verified stream for a consumer that may stop reading early (the panel
 * validator stops at a bad header or too many errors): the consumer's early
 * return does not close the stream, and `drain()` reads the rest so that the
 * checksum is always checked before anything the consumer concluded is kept.
 * `close()` releases the connection when the work is abandoned.
 */
export function drainable(verified: AsyncGenerator<Uint8Array>): { source: AsyncIterable<Uint8Array>; drain(): Promise<void>; close(): Promise<void> } {
  const source: AsyncIterable<Uint8Array> = {
    [Symbol.asyncIterator]: () => ({
      next: () => verified.next(),
      return: async () => ({ done: true as const, value: undefined }),
    }),
  };
  return {
    source,
    async drain() {
      for (let step = await verified.next(); !step.done; step = await verified.next()) {
        // Only the hash inside `verified` needs these bytes.
      }
    },
    async close() {
      await verified.return(undefined);
    },
  };
}

import { sha256OfStream } from "@/lib/intake/service";
import { StorageUnavailableError } from "@/lib/storage/errors";
import { getObjectStream, putObject } from "@/lib/storage/s3";
import { requireTestServices } from "@/tests/helpers/env";
import { ownS3rver, type OwnS3rver } from "@/tests/helpers/service-process";
import { closeConnections } from "@/tests/helpers/teardown";

// S3 failing in the middle of a streamed read (the upload checksum, a panel
// preview, ingest): the reader must get the same StorageUnavailableError — a
// 503 with a plain sentence in a route — as when the store is down from the
// start, not a bare socket error (a 500). A second s3rver of this file's own
// is stopped while an object is being read; the suite's s3rver is untouched.

jest.setTimeout(90_000);

const BUCKET = "tessera-midstream";
const KEY = "midstream/large.bin";
let store: OwnS3rver;

beforeAll(async () => {
  await requireTestServices();
  store = await ownS3rver(BUCKET);
  // Far more than the socket buffers hold, so most of it is still on the server when it stops.
  await putObject(KEY, Buffer.alloc(48 * 1024 * 1024, 7));
});

afterAll(async () => {
  await store?.remove();
  await closeConnections();
});

describe("S3 failing part-way through a read", () => {
  it("errors the stream with a StorageUnavailableError naming the bucket, as an outage before the first byte does", async () => {
    const stream = await getObjectStream(KEY);
    const chunks = stream[Symbol.asyncIterator]();
    const first = await chunks.next();
    expect(first.done).toBe(false);
    await store.stop();
    let failure: unknown = null;
    try {
      await sha256OfStream({ [Symbol.asyncIterator]: () => chunks });
    } catch (error) {
      failure = error;
    }
    expect(failure).toBeInstanceOf(StorageUnavailableError);
    expect((failure as StorageUnavailableError).message).toBe(`The file store (S3 bucket "${BUCKET}") is unavailable, so the file could not be read. Try again in a few minutes.`);
    expect((failure as StorageUnavailableError).detail).toContain(`S3 GET s3://${BUCKET}/${KEY}`);
  });

  it("reads a whole object through the same stream when the store stays up, and closes the connection of a reader that stops early", async () => {
    await store.start();
    const small = Buffer.from("region,period,value\nA,2024,1\n", "utf8");
    await putObject("midstream/small.csv", small);
    const whole = await getObjectStream("midstream/small.csv");
    const parts: Buffer[] = [];
    for await (const part of whole) parts.push(Buffer.from(part as Uint8Array));
    expect(Buffer.concat(parts).equals(small)).toBe(true);

    const early = await getObjectStream(KEY);
    for await (const part of early) {
      expect((part as Uint8Array).length).toBeGreaterThan(0);
      break; // leaving the loop destroys the stream
    }
    expect(early.destroyed).toBe(true);
  });
});

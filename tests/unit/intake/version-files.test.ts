import { createHash } from "node:crypto";
import { expectedTopologySha256 } from "@/lib/geometry/boundary-topology";
import { drainable, verifiedChunks, versionFileKey, versionTopologyKey } from "@/lib/intake/version-files";
import { StoredFileChecksumError } from "@/lib/storage/errors";

const sha = (text: string) => createHash("sha256").update(text).digest("hex");

async function* chunksOf(...parts: string[]): AsyncGenerator<Uint8Array> {
  for (const part of parts) yield Buffer.from(part, "utf8");
}

async function collect(source: AsyncIterable<Uint8Array>): Promise<string> {
  const out: Uint8Array[] = [];
  for await (const chunk of source) out.push(chunk);
  return Buffer.concat(out).toString("utf8");
}

describe("where a version's own copy lives", () => {
  it("under the workspace's versions/ prefix, by kind, version id and checksum: never under uploads/", () => {
    const key = versionFileKey(7, "panel", 42, "a".repeat(64));
    expect(key).toBe(`workspaces/7/versions/panel/42/${"a".repeat(64)}`);
    expect(key).not.toContain("/uploads/");
    expect(versionTopologyKey(key, "b".repeat(64))).toBe(`workspaces/7/versions/panel/42/topology-${"b".repeat(64)}.json`);
  });

  it("refuses ids and checksums that would make another key", () => {
    expect(() => versionFileKey(0, "panel", 1, "a".repeat(64))).toThrow("workspace id must be a positive integer (got 0)");
    expect(() => versionFileKey(1, "boundaries", 1.5, "a".repeat(64))).toThrow("version id must be a positive integer (got 1.5)");
    expect(() => versionFileKey(1, "panel", 1, "../x")).toThrow("'../x' is not a lowercase hexadecimal SHA-256");
  });
});

describe("reading a version's file checks its checksum as it streams", () => {
  it("passes the bytes through unchanged when the checksum matches", async () => {
    expect(await collect(verifiedChunks(chunksOf("a,b\n", "1,2\n"), sha("a,b\n1,2\n"), "panel version 1 (id 9)", "k"))).toBe("a,b\n1,2\n");
  });

  it("throws at the end, naming the version and both checksums, when one byte differs", async () => {
    const expected = sha("a,b\n1,2\n");
    const error = await collect(verifiedChunks(chunksOf("a,b\n", "1,3\n"), expected, "panel version 1 of 'Jobs' (id 9)", "workspaces/1/versions/panel/9/x")).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(StoredFileChecksumError);
    const e = error as StoredFileChecksumError;
    expect(e.expected).toBe(expected);
    expect(e.actual).toBe(sha("a,b\n1,3\n"));
    expect(e.message).toMatch(/^The stored file of panel version 1 of 'Jobs' \(id 9\) does not match the checksum recorded when the version was made \(found [0-9a-f]{12}…, expected [0-9a-f]{12}…\)/);
    expect(e.message).toContain("so it was not used");
  });

  it("a consumer that stops early still gets the check: drain() reads the rest and throws on a changed file", async () => {
    const changed = drainable(verifiedChunks(chunksOf("head\n", "tail-changed\n"), sha("head\ntail\n"), "panel version 2 (id 3)", "k"));
    for await (const chunk of changed.source) {
      expect(Buffer.from(chunk).toString()).toBe("head\n");
      break; // the consumer's break must not end the verified stream
    }
    await expect(changed.drain()).rejects.toBeInstanceOf(StoredFileChecksumError);

    const intact = drainable(verifiedChunks(chunksOf("head\n", "tail\n"), sha("head\ntail\n"), "panel version 2 (id 3)", "k"));
    for await (const chunk of intact.source) {
      expect(chunk.length).toBeGreaterThan(0);
      break;
    }
    await expect(intact.drain()).resolves.toBeUndefined();
  });
});

describe("which checksum a boundary version's topology must have", () => {
  const own = "workspaces/1/versions/boundaries/5/" + "c".repeat(64);
  it("the one recorded at validation when there is one", () => {
    expect(expectedTopologySha256({ s3_key: "x", file_key: own, sha256: "s".repeat(64), topology_sha256: "t".repeat(64), format: "geojson" })).toBe("t".repeat(64));
  });
  it("before validation, the version's own copy's; for a TopoJSON file, the file's", () => {
    expect(expectedTopologySha256({ s3_key: own, file_key: own, sha256: "s".repeat(64), topology_sha256: null, format: "geojson" })).toBe("s".repeat(64));
    expect(expectedTopologySha256({ s3_key: "old/key", file_key: null, sha256: "s".repeat(64), topology_sha256: null, format: "topojson" })).toBe("s".repeat(64));
  });
  it("none only for a GeoJSON version converted before topology checksums were recorded", () => {
    expect(expectedTopologySha256({ s3_key: "old/topology-1.json", file_key: null, sha256: "s".repeat(64), topology_sha256: null, format: "geojson" })).toBeNull();
  });
});

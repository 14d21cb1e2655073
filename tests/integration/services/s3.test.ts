import { randomBytes } from "node:crypto";
import { deleteObject, getObjectBytes, headObject, presignGet, presignPut, putObject } from "@/lib/storage/s3";
import { requireTestServices, type TestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";

let services: TestServices;

beforeAll(async () => {
  services = await requireTestServices();
});
afterAll(closeConnections);

const key = (name: string) => `tests/services/${Date.now().toString(36)}-${randomBytes(4).toString("hex")}/${name}`;

describe("S3 (s3rver) through lib/storage/s3", () => {
  test("server-side put, head, get and delete keep the bytes intact", async () => {
    const k = key("blob.bin");
    const body = randomBytes(256 * 1024 + 17); // not a multiple of any chunk size
    await putObject(k, body, "application/octet-stream");

    const head = await headObject(k);
    expect(head).not.toBeNull();
    expect(head?.size).toBe(body.length);
    expect(head?.contentType).toBe("application/octet-stream");

    const back = await getObjectBytes(k);
    expect(back.equals(body)).toBe(true);

    await deleteObject(k);
    expect(await headObject(k)).toBeNull();
  });

  test("a presigned PUT then a presigned GET round-trip a CSV", async () => {
    const k = key("panel.csv");
    const csv = "region,period,value\nVM-001,2008,4.2\nVM-002,2008,5.1\n";
    const putUrl = await presignPut(k, "text/csv");
    const put = await fetch(putUrl, { method: "PUT", headers: { "Content-Type": "text/csv" }, body: csv });
    expect(put.status).toBe(200);

    const head = await headObject(k);
    expect(head?.size).toBe(Buffer.byteLength(csv));
    expect(head?.contentType).toBe("text/csv");

    const getUrl = await presignGet(k, { downloadName: "panel.csv" });
    const get = await fetch(getUrl);
    expect(get.status).toBe(200);
    expect(await get.text()).toBe(csv);
    expect(get.headers.get("content-disposition")).toContain("panel.csv");
    await deleteObject(k);
  });

  test("a presigned PUT signs its Content-Type, so S3 refuses any other type", () =>
    // s3rver does not verify V4 signatures, so the refusal itself needs a real S3;
    // what we can check here is that content-type is among the signed headers.
    presignPut(key("typed.csv"), "text/csv").then((url) => {
      const signed = new URL(url).searchParams.get("X-Amz-SignedHeaders") ?? "";
      expect(signed.split(";")).toEqual(expect.arrayContaining(["content-type", "host"]));
    }));

  test("the bucket answers a browser CORS preflight from the app origin", async () => {
    const k = key("cors.csv");
    const putUrl = await presignPut(k, "text/csv");
    const origin = new URL(services.appUrl).origin;
    const preflight = await fetch(putUrl, {
      method: "OPTIONS",
      headers: { Origin: origin, "Access-Control-Request-Method": "PUT", "Access-Control-Request-Headers": "content-type" },
    });
    expect(preflight.status).toBe(200);
    // s3rver answers preflights with "*" once a rule matches; real S3 echoes the origin.
    expect([origin, "*"]).toContain(preflight.headers.get("access-control-allow-origin"));
    expect((preflight.headers.get("access-control-allow-methods") ?? "").toUpperCase()).toContain("PUT");

    // The browser's actual PUT and GET carry the origin and get it back, with ETag exposed.
    const put = await fetch(putUrl, { method: "PUT", headers: { Origin: origin, "Content-Type": "text/csv" }, body: "a,b\n1,2\n" });
    expect(put.status).toBe(200);
    expect(put.headers.get("access-control-allow-origin")).toBe(origin);
    expect(put.headers.get("access-control-expose-headers")).toContain("ETag");
    const get = await fetch(await presignGet(k), { headers: { Origin: origin } });
    expect(get.headers.get("access-control-allow-origin")).toBe(origin);
    await deleteObject(k);
  });

  test("a preflight from another origin is refused", async () => {
    const putUrl = await presignPut(key("cors-foreign.csv"), "text/csv");
    const preflight = await fetch(putUrl, {
      method: "OPTIONS",
      headers: { Origin: "http://elsewhere.invalid", "Access-Control-Request-Method": "PUT", "Access-Control-Request-Headers": "content-type" },
    });
    expect(preflight.status).toBe(403);
  });

  test("keys are validated before any request", async () => {
    await expect(presignPut("/absolute", "text/csv")).rejects.toThrow(/must not start with \//);
    await expect(headObject("a/../b")).rejects.toThrow(/\.\./);
    await expect(presignPut("ok.csv", "not a type")).rejects.toThrow();
  });
});

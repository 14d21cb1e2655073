import type { MiddlewareStack } from "@smithy/types";
import { POST as postUpload } from "@/app/api/w/[slug]/intake/uploads/route";
import { POST as postComplete } from "@/app/api/w/[slug]/intake/uploads/[uploadId]/complete/route";
import { POST as postPanels } from "@/app/api/w/[slug]/intake/panels/route";
import { getSessionUser } from "@/lib/auth/session";
import { MAX_UPLOAD_BYTES } from "@/lib/intake/service";
import { headObject, s3Client } from "@/lib/storage/s3";
import { models } from "@/lib/models";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "../auth/fixtures";
import { asSession, ctx, jsonRequest, longPanel, sha256 } from "../intake/fixtures";

// Oversized uploads, through the real route handlers, S3 (s3rver) and
// PostgreSQL: refused by their declared size before anything is signed, and
// refused at completion by the stored size alone when more arrived than was
// declared. Only "who is signed in" is stood in for.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(60_000);

let slug: string;
let workspaceId: number;

beforeAll(async () => {
  await requireTestServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  workspaceId = made.workspace.id;
  sessionMock.mockResolvedValue(asSession(made.users.steward));
});
afterAll(async () => {
  await closeConnections();
});

async function uploadRows(): Promise<number> {
  return models().Upload.count({ where: { workspaceId } });
}

/**
 * Every S3 command the app sends while `body` runs, with its object key:
 * observed on the real client (added to its middleware stack and removed
 * again), not stood in for.
 */
async function s3CommandsDuring<T>(body: () => Promise<T>): Promise<{ result: T; commands: { command: string; key: string | undefined }[] }> {
  const commands: { command: string; key: string | undefined }[] = [];
  const stack = s3Client().middlewareStack as unknown as MiddlewareStack<{ Key?: string }, object>;
  const name = "hostile-uploads-observer";
  stack.add(
    (next, context) => async (args) => {
      commands.push({ command: String((context as { commandName?: string }).commandName), key: args.input.Key });
      return next(args);
    },
    { step: "initialize", name },
  );
  try {
    return { result: await body(), commands };
  } finally {
    stack.remove(name);
  }
}

describe("oversized uploads", () => {
  it(`refuses a declared size over ${MAX_UPLOAD_BYTES / 1024 / 1024} MB at upload creation, naming the limit, with nothing signed or recorded`, async () => {
    const before = await uploadRows();
    const { result: response, commands } = await s3CommandsDuring(() =>
      postUpload(jsonRequest("POST", { kind: "panel", fileName: "whole-country.csv", size: MAX_UPLOAD_BYTES + 1, sha256: "d".repeat(64) }), ctx({ slug })),
    );
    expect(response.status).toBe(400);
    const body = (await response.json()) as { error: string; field: string; url?: string };
    expect(body.field).toBe("size");
    expect(body.error).toMatch(/larger than 200 MB/);
    expect(body.url).toBeUndefined();
    expect(commands).toEqual([]);
    expect(await uploadRows()).toBe(before);
  });

  it.each([
    ["a size far beyond any file system", 2 ** 53],
    ["a negative size", -1],
    ["a fractional size", 10.5],
    ["a size sent as text", "100"],
  ])("refuses %s at upload creation with the size field named", async (_label, size) => {
    const response = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "odd.csv", size, sha256: "e".repeat(64) }), ctx({ slug }));
    expect(response.status).toBe(400);
    expect(JSON.stringify(await response.json())).toMatch(/size/);
  });

  it("binds the presigned PUT to the declared size: Content-Length is among the signed headers, so S3 refuses any other length", async () => {
    const bytes = Buffer.from(longPanel({ years: [2002] }));
    const response = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "bound.csv", size: bytes.length, sha256: sha256(bytes) }), ctx({ slug }));
    expect(response.status).toBe(201);
    const ticket = (await response.json()) as { url: string };
    const signed = new URL(ticket.url).searchParams.get("X-Amz-SignedHeaders")?.split(";") ?? [];
    expect(signed).toEqual(expect.arrayContaining(["content-length", "content-type", "host"]));
    // s3rver does not check signatures (a real S3 does), so what it stores here says nothing; the signature is the guarantee.
  });

  it("refuses at completion an object larger than declared, from its stored size alone: never read, deleted, and no version can use it", async () => {
    const declared = Buffer.from(longPanel({ years: [2001] }));
    const ticketResponse = await postUpload(jsonRequest("POST", { kind: "panel", fileName: "small-declared.csv", size: declared.length, sha256: sha256(declared) }), ctx({ slug }));
    expect(ticketResponse.status).toBe(201);
    const ticket = (await ticketResponse.json()) as { uploadId: string; url: string; contentType: string };
    // What a hostile client sends instead: the declared bytes followed by 8 MB more.
    const oversized = Buffer.concat([declared, Buffer.alloc(8 * 1024 * 1024, "9,")]);
    const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(oversized) });
    expect(put.ok).toBe(true);
    const key = (await models().Upload.findByPk(ticket.uploadId))?.s3Key;
    if (key === undefined) throw new Error(`Upload ${ticket.uploadId} has no S3 key.`);
    // The oversized object is in the bucket before completion, so its absence afterwards is a deletion.
    expect((await headObject(key))?.size).toBe(oversized.length);

    const { result: completeResponse, commands } = await s3CommandsDuring(() => postComplete(jsonRequest("POST"), ctx({ slug, uploadId: ticket.uploadId })));
    const complete = (await completeResponse.json()) as { state: string; error: string };
    expect(completeResponse.status).toBe(422);
    expect(complete.state).toBe("failed");
    expect(complete.error).toMatch(new RegExp(`${oversized.length.toLocaleString("en")} bytes, more than the ${declared.length.toLocaleString("en")} declared`));
    // HEAD to learn the size, DELETE to drop it; never a GET of the body.
    expect(commands.filter((c) => c.key === key).map((c) => c.command)).toEqual(["HeadObjectCommand", "DeleteObjectCommand"]);
    expect(await headObject(key)).toBeNull();

    const mapping = { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" };
    const created = await postPanels(jsonRequest("POST", { uploadId: ticket.uploadId, panelName: "Never", boundarySetId: 1, decimal: ".", mapping }), ctx({ slug }));
    expect(created.status).toBe(409);
    expect(((await created.json()) as { error: string }).error).toMatch(/This upload failed/);
  });
});

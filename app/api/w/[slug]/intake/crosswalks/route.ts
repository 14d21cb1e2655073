import { memberRoute } from "@/lib/http/route";
import { createCrosswalkSchema, createUploadedCrosswalk, deriveCrosswalkFor, listCrosswalks } from "@/lib/reforms/service";

// The workspace's crosswalks between boundary versions (the Reforms screen under Intake).
export const GET = memberRoute({ capability: "data.view-unpublished" }, async ({ member }) => Response.json({ crosswalks: await listCrosswalks(member) }));

// A new crosswalk: from a received crosswalk CSV upload (uploadId), else derived by areal weighting.
export const POST = memberRoute({ capability: "data.curate", body: createCrosswalkSchema }, async ({ member, body }) =>
  Response.json(body.uploadId !== undefined ? await createUploadedCrosswalk(member, { ...body, uploadId: body.uploadId }) : await deriveCrosswalkFor(member, body), { status: 201 }),
);

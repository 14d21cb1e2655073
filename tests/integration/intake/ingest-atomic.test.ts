import { QueryTypes } from "sequelize";
import { authorizeMember } from "@/lib/auth/guard";
import { db } from "@/lib/db";
import { completeUpload, createBoundaryVersion, createPanelVersion, createUpload, publishVersion } from "@/lib/intake/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { ingestBoundaryVersion } from "@/lib/intake/ingest-boundaries";
import { ingestPanelVersion } from "@/lib/intake/ingest-panel";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "../auth/fixtures";
import { gridGeoJson, longPanel, sha256 } from "./fixtures";

// Ingest called directly (no queue), with the test hook that makes it fail
// half-way through the COPY: nothing may be left behind.

jest.setTimeout(60_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

async function put(member: Awaited<ReturnType<typeof authorizeMember>>, kind: "boundaries" | "panel", fileName: string, text: string): Promise<string> {
  const bytes = Buffer.from(text);
  const ticket = await createUpload(member, { kind, fileName, size: bytes.length, sha256: sha256(bytes) });
  const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: bytes });
  expect(response.ok).toBe(true);
  expect((await completeUpload(member, ticket.uploadId)).state).toBe("received");
  return ticket.uploadId;
}

async function count(sql: string, id: number): Promise<number> {
  const rows = await db().query<{ n: string }>(sql, { replacements: { id }, type: QueryTypes.SELECT });
  return Number(rows[0]?.n ?? 0);
}

test("a panel ingest that fails mid-COPY leaves no observations, no indicators and no validated state", async () => {
  const { workspace, users } = await makeWorkspace({ steward: "steward" });
  const member = await authorizeMember(users.steward.id, workspace.id, "data.curate");
  const boundaryUpload = await put(member, "boundaries", "grid.geojson", gridGeoJson(10));
  const boundaries = await createBoundaryVersion(member, { uploadId: boundaryUpload, setName: "Grid", objectName: "regions", idProperty: "code" }, { enqueueJob: false });
  expect((await ingestBoundaryVersion(boundaries.id)).state).toBe("validated");
  await publishVersion(member, "boundaries", boundaries.id);

  // 100 regions × 40 years × 3 indicators = 12,000 observations, several COPY batches.
  const years = Array.from({ length: 40 }, (_, i) => 1980 + i);
  const panelUpload = await put(member, "panel", "big.csv", longPanel({ size: 10, years, indicators: ["alpha", "beta", "gamma"] }));
  const panel = await createPanelVersion(
    member,
    { uploadId: panelUpload, panelName: "Big", boundarySetId: boundaries.parentId, decimal: ".", mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" }, remember: false },
    { enqueueJob: false },
  );

  const outcome = await ingestPanelVersion(panel.id, { failAfterObservations: 5000 });
  expect(outcome.state).toBe("rejected");
  if (outcome.state === "rejected") expect(JSON.stringify(outcome.report)).toMatch(/nothing was kept/);
  expect(await count("SELECT count(*) AS n FROM observations WHERE panel_version_id = :id", panel.id)).toBe(0);
  expect(await count("SELECT count(*) AS n FROM indicators WHERE workspace_id = :id", workspace.id)).toBe(0);
  const state = await db().query<{ state: string }>("SELECT state FROM panel_versions WHERE id = :id", { replacements: { id: panel.id }, type: QueryTypes.SELECT });
  expect(state[0].state).toBe("rejected");

  // A retried job does not run a second time over a settled version.
  expect((await ingestPanelVersion(panel.id)).state).toBe("skipped");
});

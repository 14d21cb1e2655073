import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { panelDimensions } from "@/lib/intake/published-panel";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";

// panelDimensions walks the observations' primary key as a loose index scan
// rather than a DISTINCT over every row; it must still name exactly the
// indicators and periods that a DISTINCT finds, including a ragged panel
// where indicators cover different periods.

async function distinct(column: "indicator_code" | "period_key", panelVersionId: number): Promise<string[]> {
  const rows = await db().query<{ v: string }>(`SELECT DISTINCT ${column} AS v FROM observations WHERE panel_version_id = $1 ORDER BY 1`, {
    bind: [panelVersionId],
    type: QueryTypes.SELECT,
  });
  return rows.map((r) => r.v);
}

let workspaceId: number;

beforeAll(async () => {
  await requireTestServices();
  workspaceId = (await makeWorkspace({ steward: "steward" })).workspace.id;
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

describe("panel dimensions", () => {
  it("names every indicator (sorted) and every period (in time order) of a ragged panel, as a DISTINCT over all observations does", async () => {
    const panel = await loadVeldmarkPanel(workspaceId, { indicators: ["unemployment_rate", "broadband_coverage"], periods: ["2012", "2013", "2014"] });
    // Ragged: one indicator gains a later period, another indicator has a single period, and one sorts before all others.
    await db().query(
      `INSERT INTO observations (panel_version_id, indicator_code, period_key, region_code, value)
       VALUES ($1, 'unemployment_rate', '2016', $2, 1.5), ($1, 'aa_first', '2010', $2, 2), ($1, 'zz_last', '2015', $2, NULL)`,
      { bind: [panel.panelVersionId, panel.regions[0]] },
    );
    const dims = await panelDimensions(panel.panelVersionId);
    expect(dims.indicators).toEqual(await distinct("indicator_code", panel.panelVersionId));
    expect(dims.indicators).toEqual(["aa_first", "broadband_coverage", "unemployment_rate", "zz_last"]);
    expect(dims.periods.map((p) => p.key)).toEqual(["2010", "2012", "2013", "2014", "2015", "2016"]);
    expect([...dims.periods.map((p) => p.key)].sort()).toEqual(await distinct("period_key", panel.panelVersionId));
  });

  it("gives no indicator and no period for a version without observations", async () => {
    const panel = await loadVeldmarkPanel(workspaceId, { indicators: ["no_such_indicator"] });
    expect(await panelDimensions(panel.panelVersionId)).toEqual({ indicators: [], periods: [] });
  });
});

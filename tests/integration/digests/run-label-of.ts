import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { runLabel } from "@/lib/runs/label";
import type { ResolvedRunParams } from "@/lib/runs/schemas";

/** A stored run's per-workspace number and its label as screens and digests show it (lib/runs/label). */
export async function runLabelOf(runId: number): Promise<{ number: number; name: string; label: string }> {
  const [row] = await db().query<{ number: number; params: ResolvedRunParams; panel_name: string; panel_version: number }>(
    `SELECT r.number, r.params, p.name AS panel_name, pv.version AS panel_version
       FROM runs r JOIN panel_versions pv ON pv.id = r.panel_version_id JOIN panels p ON p.id = pv.panel_id WHERE r.id = $1`,
    { bind: [runId], type: QueryTypes.SELECT },
  );
  if (!row) throw new Error(`There is no run ${runId}.`);
  return { number: row.number, name: `Run ${row.number}`, label: runLabel({ number: row.number, panelName: row.panel_name, panelVersion: row.panel_version, params: row.params }) };
}

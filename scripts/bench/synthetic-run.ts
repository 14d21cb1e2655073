/**
 * A completed synthetic run for the catalogue benchmarks (scripts/bench/runs.ts
 * catalogue-p95 and scripts/bench/load.ts): `rows` result rows, up to 200
 * indicators × 50 periods, attached to a panel version already in the database.
 * Rows go in while the run is still "running" and it is completed last: the
 * immutability triggers refuse results added to a completed run.
 */
import { QueryTypes } from "sequelize";
import { db } from "../../lib/db";

export type SyntheticRun = { id: number; workspaceId: number; remove: () => Promise<void> };

export async function createSyntheticRun(options: { rows: number; indicatorPrefix: string; workspaceSlug?: string }): Promise<SyntheticRun> {
  const [pv] = await db().query<{ id: number; boundary_version_id: number; workspace_id: number }>(
    options.workspaceSlug
      ? `SELECT pv.id, pv.boundary_version_id, p.workspace_id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id
           JOIN workspaces w ON w.id = p.workspace_id WHERE w.slug = $1 AND pv.state = 'published' ORDER BY pv.id LIMIT 1`
      : "SELECT pv.id, pv.boundary_version_id, p.workspace_id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id ORDER BY pv.id LIMIT 1",
    { bind: options.workspaceSlug ? [options.workspaceSlug] : [], type: QueryTypes.SELECT },
  );
  if (!pv) {
    throw new Error(
      options.workspaceSlug
        ? `workspace "${options.workspaceSlug}" has no published panel version to hang a synthetic run on (is the demo seeded?)`
        : "no panel version to attach a benchmark run to",
    );
  }
  const periods = Array.from({ length: 50 }, (_, i) => String(1975 + i));
  const indicators = Array.from({ length: Math.ceil(options.rows / periods.length) }, (_, i) => `${options.indicatorPrefix}${String(i).padStart(3, "0")}`);
  const params = { weights: "queen", transform: "row-standardised", islandPolicy: "exclude", permutations: 999, seed: 1, alpha: 0.05, correction: "fdr", indicators, periods, local: false, panelVersionId: pv.id, boundaryVersionId: pv.boundary_version_id, method: "tessera-runs/2" };
  const [run] = await db().query<{ id: number }>(
    `INSERT INTO runs (workspace_id, panel_version_id, boundary_version_id, origin, params, seed, state, progress, pieces_total, pieces_done, results_total, started_at, finished_at, created_at, updated_at)
     VALUES ($1, $2, $3, 'benchmark', $4::jsonb, 1, 'running', 0, $5, 0, 0, now(), NULL, now(), now()) RETURNING id`,
    { bind: [pv.workspace_id, pv.id, pv.boundary_version_id, JSON.stringify(params), indicators.length], type: QueryTypes.SELECT },
  );
  const remove = async () => {
    await db().query("DELETE FROM runs WHERE id = $1", { bind: [run.id] });
  };
  try {
    await db().query(
      `INSERT INTO run_pieces (run_id, indicator_code, state, attempts, periods_total, periods_done, created_at, updated_at)
       SELECT $1, c, 'completed', 1, 50, 50, now(), now() FROM unnest($2::text[]) AS c`,
      { bind: [run.id, indicators] },
    );
    await db().query(
      `INSERT INTO run_results (run_id, indicator_code, period_key, period_index, status, n, regions_in_boundaries, exclusions, i, expected_i,
                                z_randomisation, p_randomisation, perm_p, adjusted_p, significance, delta_i, geary_c, general_g, created_at)
       SELECT $1, ind.c, per.p, per.o - 1, 'computed', 240, 240, '{}'::jsonb, s.v, -1.0/239, s.v * 20, 0.5 * (1 - s.v), 0.001 + (1 - abs(s.v)) * 0.5,
              0.001 + (1 - abs(s.v)) * 0.6, CASE WHEN s.v > 0.3 THEN 'clustering' WHEN s.v < -0.3 THEN 'dispersion' ELSE 'not-significant' END,
              s.v / 10, 1 - s.v, 0.02, now()
         FROM unnest($2::text[]) AS ind(c) CROSS JOIN unnest($3::text[]) WITH ORDINALITY AS per(p, o)
         CROSS JOIN LATERAL (SELECT sin(length(ind.c) * per.o + ascii(right(ind.c, 1))) AS v) s
        LIMIT $4`,
      { bind: [run.id, indicators, periods, options.rows] },
    );
    await db().query(
      `UPDATE runs SET state = 'completed', progress = 1, pieces_done = pieces_total, results_total = $2, finished_at = now() WHERE id = $1`,
      { bind: [run.id, options.rows] },
    );
    await db().query("ANALYZE run_results");
  } catch (error) {
    await remove();
    throw error;
  }
  return { id: run.id, workspaceId: pv.workspace_id, remove };
}

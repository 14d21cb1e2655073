import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import type { ResolvedRunParams } from "@/lib/runs/schemas";

/** The demo workspace's completed demo run (scripts/demo/run-demo-analysis.ts), newest first; throws when the bring-up made none. */
export async function demoRun(slug: string): Promise<{ id: number; params: ResolvedRunParams }> {
  const [run] = await db().query<{ id: number; params: ResolvedRunParams }>(
    `SELECT r.id, r.params FROM runs r JOIN workspaces w ON w.id = r.workspace_id
      WHERE w.slug = $1 AND r.origin = 'demo' AND r.state = 'completed' ORDER BY r.id DESC LIMIT 1`,
    { bind: [slug], type: QueryTypes.SELECT },
  );
  if (!run) throw new Error(`The demo workspace "${slug}" has no completed demo run: scripts/demo/run-demo-analysis.ts has not run.`);
  return run;
}

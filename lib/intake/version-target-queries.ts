/**
 * Loads what {@link suggestTarget} compares a new upload with: per boundary
 * set the region codes of its latest version that has regions, per panel the
 * indicator codes of its latest version with a validation report. Every query is bound to
 * one workspace.
 */
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import type { TargetCandidate } from "./version-target";

// Versions that got as far as validation have regions (or a report); uploaded and rejected ones do not count.
const USABLE_STATES = "('validated','published','archived')";
const PANEL_REPORTED_STATES = "('validated','published','archived','rejected')";

/** Each boundary set of the workspace with the region codes of its latest usable version (none yet: no codes). */
export async function boundaryTargetCandidates(workspaceId: number): Promise<TargetCandidate[]> {
  const rows = await db().query<{ id: number; name: string; version: number | null; codes: string[] | null }>(
    `SELECT s.id, s.name, latest.version,
            (SELECT array_agg(r.code) FROM regions r WHERE r.boundary_version_id = latest.id) AS codes
       FROM boundary_sets s
       LEFT JOIN LATERAL (
         SELECT bv.id, bv.version FROM boundary_versions bv
          WHERE bv.boundary_set_id = s.id AND bv.state IN ${USABLE_STATES}
          ORDER BY bv.version DESC LIMIT 1
       ) latest ON true
      WHERE s.workspace_id = :workspaceId
      ORDER BY s.id`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  return rows.map((row) => ({ id: row.id, name: row.name, version: row.version, codes: row.codes ?? [] }));
}

/**
 * Each panel of the workspace with the indicator codes of its latest version
 * that has a validation report listing them. A rejected version counts: its
 * report still lists the indicators, and the usual next upload is its fix.
 */
export async function panelTargetCandidates(workspaceId: number): Promise<TargetCandidate[]> {
  const rows = await db().query<{ id: number; name: string; version: number | null; indicators: unknown }>(
    `SELECT p.id, p.name, latest.version, latest.indicators
       FROM panels p
       LEFT JOIN LATERAL (
         SELECT pv.version, pv.report -> 'indicators' AS indicators FROM panel_versions pv
          WHERE pv.panel_id = p.id AND pv.state IN ${PANEL_REPORTED_STATES} AND jsonb_typeof(pv.report -> 'indicators') = 'array'
          ORDER BY pv.version DESC LIMIT 1
       ) latest ON true
      WHERE p.workspace_id = :workspaceId
      ORDER BY p.id`,
    { replacements: { workspaceId }, type: QueryTypes.SELECT },
  );
  return rows.map((row) => ({
    id: row.id,
    name: row.name,
    version: row.version,
    codes: Array.isArray(row.indicators) ? row.indicators.filter((code): code is string => typeof code === "string") : [],
  }));
}

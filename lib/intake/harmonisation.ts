/**
 * A harmonised panel version's provenance (panel_versions.harmonisation, written
 * by lib/reforms) with the names a screen shows: the source version, the
 * crosswalk and its boundaries, the continuation. Read by the Intake version
 * screen and by the indicator timeline of a run on such a version.
 */
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import type { HarmonisationProvenance } from "@/models/intake-types";

export interface HarmonisationView extends HarmonisationProvenance {
  source: { panelVersionId: number; panelName: string; version: number } | null;
  crosswalk: { id: number; origin: "derived" | "uploaded" } | null;
  fromBoundary: { setName: string; version: number } | null;
  toBoundary: { setName: string; version: number } | null;
  continuation: { panelVersionId: number; panelName: string; version: number } | null;
}

/** The names behind a provenance, within one workspace (a record of another workspace reads as null). */
export async function harmonisationView(workspaceId: number, provenance: HarmonisationProvenance): Promise<HarmonisationView> {
  const panelVersion = async (id: number | undefined) => {
    if (id === undefined) return null;
    const rows = await db().query<{ name: string; version: number }>(
      "SELECT p.name, pv.version FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE pv.id = :id AND p.workspace_id = :workspaceId",
      { replacements: { id, workspaceId }, type: QueryTypes.SELECT },
    );
    return rows[0] ? { panelVersionId: id, panelName: rows[0].name, version: rows[0].version } : null;
  };
  const boundary = async (id: number) => {
    const rows = await db().query<{ name: string; version: number }>(
      "SELECT s.name, bv.version FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id WHERE bv.id = :id AND s.workspace_id = :workspaceId",
      { replacements: { id, workspaceId }, type: QueryTypes.SELECT },
    );
    return rows[0] ? { setName: rows[0].name, version: rows[0].version } : null;
  };
  const crosswalks = await db().query<{ id: number; origin: "derived" | "uploaded" }>("SELECT id, origin FROM crosswalks WHERE id = :id AND workspace_id = :workspaceId", {
    replacements: { id: provenance.crosswalkId, workspaceId },
    type: QueryTypes.SELECT,
  });
  return {
    ...provenance,
    source: await panelVersion(provenance.sourcePanelVersionId),
    crosswalk: crosswalks[0] ?? null,
    fromBoundary: await boundary(provenance.fromBoundaryVersionId),
    toBoundary: await boundary(provenance.toBoundaryVersionId),
    continuation: await panelVersion(provenance.continuationPanelVersionId),
  };
}

/** The provenance of a panel version, with its names; null when the version was uploaded, not harmonised. */
export async function harmonisationOfPanelVersion(workspaceId: number, panelVersionId: number): Promise<HarmonisationView | null> {
  const rows = await db().query<{ harmonisation: HarmonisationProvenance | null }>(
    "SELECT pv.harmonisation FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE pv.id = :panelVersionId AND p.workspace_id = :workspaceId",
    { replacements: { panelVersionId, workspaceId }, type: QueryTypes.SELECT },
  );
  const provenance = rows[0]?.harmonisation;
  return provenance ? harmonisationView(workspaceId, provenance) : null;
}

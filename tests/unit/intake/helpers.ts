import { createReadStream } from "node:fs";
import path from "node:path";
import { validatePanel, type Observation, type PanelOptionsInput, type PanelReport } from "@/lib/intake";

export const FIXTURES = path.join(__dirname, "..", "..", "fixtures", "intake");
export const BOUNDARY_IDS = ["R01", "R02", "R03", "R04"];

export function fixture(name: string): string {
  return path.join(FIXTURES, name);
}

/** Validates a fixture against the four test regions, collecting the emitted observations. */
export async function checkFixture(
  name: string,
  options: PanelOptionsInput = {},
  /** null: check without boundaries. */
  boundaryIds: string[] | null = BOUNDARY_IDS,
): Promise<{ report: PanelReport; observations: Observation[] }> {
  const observations: Observation[] = [];
  const report = await validatePanel({
    source: createReadStream(fixture(name)),
    options,
    boundaryIds: boundaryIds ?? undefined,
    onObservations: (batch) => {
      observations.push(...batch);
    },
  });
  return { report, observations };
}

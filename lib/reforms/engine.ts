/**
 * The one door between the product and the boundary-reform engine: deriving
 * an area-weighted crosswalk between two boundary versions
 * (lib/geometry/crosswalk.ts, polygon clipping), harmonising one indicator's
 * values through a crosswalk (lib/geometry/harmonise.ts) and checking a
 * steward's crosswalk CSV (lib/intake/crosswalk-csv.ts). The rest of
 * lib/reforms, the routes and the demo call these functions only, in the
 * shapes the product stores.
 *
 * Pure: no database, no next, no react.
 */
import type { Topology } from "topojson-specification";
import { areaCrosswalk, regionAreas as engineRegionAreas, type BoundaryLayer } from "@/lib/geometry/crosswalk";
import { harmonise } from "@/lib/geometry/harmonise";
import { validateCrosswalkCsv, type CrosswalkCsvProblem, type CrosswalkProblemCode } from "@/lib/intake/crosswalk-csv";

export interface TopologyInput {
  topology: Topology;
  /** The object of the topology that holds the regions. */
  object: string;
  /** The property holding the region code. */
  idProperty: string;
}

export interface CrosswalkPair {
  from: string;
  to: string;
  /** Fraction of the source region (by area for derived crosswalks) that lies in the target region, in (0, 1]. */
  share: number;
}

export interface DerivedCrosswalk {
  pairs: CrosswalkPair[];
  /** Source regions overlapping no target region. */
  unmatchedFrom: string[];
  /** Target regions no source region overlaps. */
  uncoveredTo: string[];
  /** Overlaps below the engine's sliver tolerance (a share of their source region), left out of `pairs`. */
  droppedSlivers: CrosswalkPair[];
  coordinates: "planar" | "geographic";
  /** Area of every source region (coordinate units² for planar, km² on the sphere for longitude/latitude). share × fromAreas[from] is the overlap area. */
  fromAreas: Record<string, number>;
  /** Area of every target region, same units. */
  toAreas: Record<string, number>;
}

function layerOf(input: TopologyInput): BoundaryLayer {
  return { boundaries: { topology: input.topology, sourceFormat: "topojson" }, objectName: input.object, idProperty: input.idProperty };
}

/** Area of every region of a boundary version, in the units of {@link deriveCrosswalk}. */
export function regionAreas(input: TopologyInput): Record<string, number> {
  return Object.fromEntries(engineRegionAreas(layerOf(input)).areas);
}

/**
 * The area-weighted crosswalk from one boundary version to another: for each
 * source region, the share of its area lying in each target region.
 */
export function deriveCrosswalk(from: TopologyInput, to: TopologyInput): DerivedCrosswalk {
  const xw = areaCrosswalk(layerOf(from), layerOf(to));
  return {
    pairs: xw.pairs.map((p) => ({ from: p.from, to: p.to, share: p.share })),
    unmatchedFrom: [...xw.unmatchedFrom],
    uncoveredTo: [...xw.uncoveredTo],
    droppedSlivers: xw.droppedSlivers.map((d) => ({ from: d.from, to: d.to, share: d.share })),
    coordinates: xw.coordinates,
    fromAreas: Object.fromEntries(xw.sources.map((s) => [s.id, s.area])),
    toAreas: Object.fromEntries(xw.targets.map((t) => [t.id, t.area])),
  };
}

export type HarmoniseMethod =
  /** Counts: each target gets the share-weighted sum of its sources. */
  | { kind: "extensive" }
  /** Rates, averages: the mean of the sources weighted by their overlap with the target (aligned with `pairs`), over the covered part of the target. */
  | { kind: "intensive"; overlapAreas: readonly number[] }
  /** The mean of the sources weighted by the part of a denominator indicator (e.g. population) each sends to the target. */
  | { kind: "intensive-by"; denominatorByFrom: ReadonlyMap<string, number | null> };

/**
 * One indicator of one period onto the target regions (lib/geometry/harmonise):
 * a target any of whose sources lacks a value (or, weighting by a
 * denominator, lacks the denominator) is missing, never a total or mean over
 * part of its sources.
 */
export function harmoniseValues(pairs: readonly CrosswalkPair[], valuesByFrom: ReadonlyMap<string, number | null>, method: HarmoniseMethod): Map<string, number | null> {
  if (method.kind === "extensive") return harmonise(pairs, valuesByFrom, { kind: "extensive" }).values;
  if (method.kind === "intensive") {
    const links = pairs.map((p, i) => ({ ...p, area: method.overlapAreas[i] ?? Number.NaN }));
    return harmonise(links, valuesByFrom, { kind: "intensive", weighting: { by: "area" } }).values;
  }
  return harmonise(pairs, valuesByFrom, { kind: "intensive", weighting: { by: "denominator", values: method.denominatorByFrom } }).values;
}

export type CrosswalkIssueCode = CrosswalkProblemCode;

/** One problem of a crosswalk file: the intake's located problem plus its file line (1 = header), its kind and a severity. */
export interface CrosswalkIssue extends CrosswalkCsvProblem {
  line: number | null;
  severity: "error" | "warning";
}

/**
 * Reads and checks a crosswalk CSV (lib/intake/crosswalk-csv): a header
 * naming `from`, `to` and `share`, then one pair per line. Errors: unknown
 * codes, shares that are not numbers in (0, 1], repeated pairs, a source whose
 * shares do not sum to 1 within the tolerance. Warnings: source regions
 * without any pair, target regions no pair reaches.
 */
export function parseCrosswalkCsv(
  text: string,
  fromCodes: readonly string[],
  toCodes: readonly string[],
): { pairs: CrosswalkPair[]; issues: CrosswalkIssue[]; unmatchedFrom: string[]; uncoveredTo: string[] } {
  const report = validateCrosswalkCsv(text, { fromIds: fromCodes, toIds: toCodes });
  // The report's rows count the header as row 0, so a row's file line is row + 1.
  const located = (severity: "error" | "warning") => (p: CrosswalkCsvProblem): CrosswalkIssue => ({ ...p, line: p.row === null ? null : p.row + 1, severity });
  return {
    // The valid rows even when others are wrong (the caller stores pairs only for a file without errors).
    pairs: report.links.map((l) => ({ from: l.from, to: l.to, share: l.share })),
    issues: [...report.errors.map(located("error")), ...report.warnings.map(located("warning"))],
    unmatchedFrom: report.unmatchedFrom,
    uncoveredTo: report.uncoveredTo,
  };
}

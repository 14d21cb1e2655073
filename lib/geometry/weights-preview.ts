/**
 * The neighbours preview of the Boundaries screen: a boundary version's
 * region centroids and links under a weights rule, the neighbour-count
 * histogram and the islands. Server-only; does not authorise.
 */
import { z } from "zod";
import { InputError } from "@/lib/http/errors";
import { regionCentroids, summariseWeights, weightsFromTopology } from "@/lib/spatial";
import { loadBoundaryTopology } from "./boundary-topology";

export const PREVIEW_RULES = /^(queen|rook|knn:([1-9]\d?)|band(:(\d+(\.\d+)?))?)$/;

/** Search parameters of the neighbours preview (GET …/boundaries/[versionId]/weights). */
export const weightsPreviewQuerySchema = z.object({
  rule: z.string().regex(PREVIEW_RULES, "use queen, rook, knn:K (K from 1 to 99), band or band:D").default("queen"),
});

export interface WeightsPreview {
  rule: string;
  coordinates: "planar" | "lonlat";
  ids: string[];
  /** Region centroids in the topology's coordinates, aligned with `ids`. */
  centroids: [number, number][];
  /** Undirected links between region indices (i < j); a one-way k-nearest link is drawn once. */
  links: [number, number][];
  histogram: { neighbours: number; regions: number }[];
  islands: string[];
  n: number;
  meanNeighbours: number;
  components: number;
  /** Distance band actually used (band rules), in km or coordinate units. */
  band: number | null;
}

/** The engine names the problem (k too large for the number of regions, …): a 422 naming the rule. */
function refusedRule<T>(work: () => T): T {
  try {
    return work();
  } catch (err) {
    throw new InputError(err instanceof Error ? err.message : String(err), "rule", 422);
  }
}

/**
 * Neighbours of a boundary version under a weights rule, for the Boundaries
 * screen: centroids, links, the neighbour-count histogram and the islands.
 * @throws InputError (422, field `rule`) naming the rule when it is not one of
 * queen, rook, knn:K, band, band:D, or the engine refuses it for these
 * boundaries (k too large for the number of regions, …).
 */
export async function boundaryWeightsPreview(boundaryVersionId: number, rule: string): Promise<WeightsPreview> {
  if (!PREVIEW_RULES.test(rule)) throw new InputError(`unknown weights rule '${rule}'; use queen, rook, knn:K (K from 1 to 99), band or band:D`, "rule", 422);
  const boundaries = await loadBoundaryTopology(boundaryVersionId);
  const options = { object: boundaries.objectName, idProperty: boundaries.idProperty };
  const weights = refusedRule(() => weightsFromTopology(boundaries.topology, rule, options));
  const points = refusedRule(() => regionCentroids(boundaries.topology, options));
  const summaryW = refusedRule(() => summariseWeights(weights));
  const seen = new Set<string>();
  const links: [number, number][] = [];
  for (let i = 0; i < weights.ids.length; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      const a = Math.min(i, j);
      const b = Math.max(i, j);
      const key = `${a}:${b}`;
      if (!seen.has(key)) {
        seen.add(key);
        links.push([a, b]);
      }
    }
  }
  const bandMatch = /^band:(.+)$/.exec(weights.rule);
  return {
    rule: weights.rule,
    coordinates: boundaries.coordinates,
    ids: [...weights.ids],
    centroids: Array.from(points.x, (x, i) => [x, points.y[i]] as [number, number]),
    links,
    histogram: summaryW.neighbourCounts.histogram.map((h) => ({ neighbours: h.neighbours, regions: h.regions })),
    islands: [...summaryW.islands],
    n: summaryW.n,
    meanNeighbours: summaryW.neighbourCounts.mean,
    components: summaryW.components.count,
    band: bandMatch ? Number(bandMatch[1]) : null,
  };
}

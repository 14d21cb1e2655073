import { weightsFromNeighbourLists, type SpatialWeights } from "@/lib/spatial";

/**
 * A size × size rook lattice of regions "r0".."r{size²−1}" (row by row) as
 * base (binary) weights; with `island`, one more region "isle" without
 * neighbours.
 */
export function rookLattice(size: number, { island = false }: { island?: boolean } = {}): SpatialWeights {
  const ids: string[] = [];
  const lists: number[][] = [];
  for (let r = 0; r < size; r++) {
    for (let c = 0; c < size; c++) {
      ids.push(`r${r * size + c}`);
      const nb: number[] = [];
      if (r > 0) nb.push((r - 1) * size + c);
      if (c > 0) nb.push(r * size + c - 1);
      if (c < size - 1) nb.push(r * size + c + 1);
      if (r < size - 1) nb.push((r + 1) * size + c);
      lists.push(nb);
    }
  }
  if (island) {
    ids.push("isle");
    lists.push([]);
  }
  return weightsFromNeighbourLists(ids, lists, { rule: "rook", transform: "binary" });
}

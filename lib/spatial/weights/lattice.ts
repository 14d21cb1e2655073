/**
 * Contiguity weights of a regular rows × columns lattice (for tests,
 * benchmarks and teaching examples; no geometry needed).
 */
import type { SpatialWeights } from "../types";
import { createSpatialWeights } from "./sparse";

/**
 * Binary rook or queen weights of a rows × columns lattice of square cells.
 * Cells are numbered row by row (cell (r, c) has index r·columns + c) and
 * named `"r{row}c{column}"` unless `ids` is given. Rook: the up to 4 cells
 * sharing an edge; queen: the up to 8 cells sharing an edge or a corner.
 *
 * @param rows, columns lattice size, integers ≥ 1 (rows·columns ≥ 2).
 * @throws Error for bad sizes or a wrong number of ids.
 * Cost: O(rows · columns).
 * @example
 *   latticeWeights(3, 3, "rook").offsets; // centre cell (index 4) has 4 neighbours
 */
export function latticeWeights(rows: number, columns: number, rule: "rook" | "queen", ids?: readonly string[]): SpatialWeights {
  if (!Number.isInteger(rows) || !Number.isInteger(columns) || rows < 1 || columns < 1 || rows * columns < 2) {
    throw new Error(`A lattice needs integer rows and columns ≥ 1 with at least 2 cells; got ${rows} × ${columns}.`);
  }
  const n = rows * columns;
  if (ids !== undefined && ids.length !== n) throw new Error(`A ${rows} × ${columns} lattice needs ${n} ids; got ${ids.length}.`);
  const names = ids ?? Array.from({ length: n }, (_, i) => `r${Math.floor(i / columns)}c${i % columns}`);
  const offsets = new Int32Array(n + 1);
  const neighbours: number[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      // visited in ascending index order
      for (let dr = -1; dr <= 1; dr++) {
        for (let dc = -1; dc <= 1; dc++) {
          if (dr === 0 && dc === 0) continue;
          if (rule === "rook" && dr !== 0 && dc !== 0) continue;
          const rr = r + dr;
          const cc = c + dc;
          if (rr < 0 || rr >= rows || cc < 0 || cc >= columns) continue;
          neighbours.push(rr * columns + cc);
        }
      }
      offsets[r * columns + c + 1] = neighbours.length;
    }
  }
  return createSpatialWeights({
    ids: names,
    offsets,
    neighbours,
    weights: new Float64Array(neighbours.length).fill(1),
    rule,
    transform: "binary",
  });
}

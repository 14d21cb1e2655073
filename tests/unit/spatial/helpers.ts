/**
 * Helpers for the spatial engine tests: exact enumeration of permutations
 * (small n only) and invented inputs.
 */
import { topology } from "topojson-server";
import type { Feature, FeatureCollection, Polygon } from "geojson";
import type { Topology } from "topojson-specification";

/** All permutations of `items` (n! of them; keep n ≤ 7). */
export function allPermutations<T>(items: readonly T[]): T[][] {
  if (items.length <= 1) return [items.slice()];
  const out: T[][] = [];
  items.forEach((item, i) => {
    const rest = [...items.slice(0, i), ...items.slice(i + 1)];
    for (const p of allPermutations(rest)) out.push([item, ...p]);
  });
  return out;
}

/** Mean and population variance (divisor N) of a list: the exact moments of an enumeration. */
export function exactMoments(values: readonly number[]): { mean: number; variance: number } {
  const mean = values.reduce((s, v) => s + v, 0) / values.length;
  const variance = values.reduce((s, v) => s + (v - mean) ** 2, 0) / values.length;
  return { mean, variance };
}

/** A rows × columns grid of unit squares as a TopoJSON topology (object "cells", property "code" = "r{row}c{col}"). */
export function gridTopology(rows: number, columns: number, size = 1): Topology {
  const features: Feature<Polygon, { code: string }>[] = [];
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < columns; c++) {
      const x = c * size;
      const y = r * size;
      features.push({
        type: "Feature",
        properties: { code: `r${r}c${c}` },
        geometry: { type: "Polygon", coordinates: [[[x, y], [x, y + size], [x + size, y + size], [x + size, y], [x, y]]] },
      });
    }
  }
  const collection: FeatureCollection<Polygon, { code: string }> = { type: "FeatureCollection", features };
  return topology({ cells: collection }) as unknown as Topology;
}

/** Invented values with some texture: a deterministic function of the index. */
export function inventedValues(n: number, offset = 0): number[] {
  return Array.from({ length: n }, (_, i) => Math.round((3 + Math.sin(i * 1.7 + offset) * 2 + (i % 3) * 0.4) * 1000) / 1000);
}

/**
 * The fast permutation machinery against plain references written out here:
 * the shuffle against the 16-bit Lemire Fisher–Yates drawn one `next()` at a
 * time from pure-rand's xoroshiro128+, the unordered-pair weights against a
 * Map-based construction, and the four-arrangement kernel against evaluating
 * each statistic's numerator over the full CSR links on the same arrangements.
 */
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import {
  createRandomSource,
  latticeWeights,
  nearestNeighbourWeights,
  rowStandardisedWeights,
  weightsFromNeighbourLists,
  withSelfLinks,
  type SpatialWeights,
} from "@/lib/spatial";
import { globalPermutationSums, pairWeights } from "@/lib/spatial/permutation";
import { inventedValues } from "./helpers";

/**
 * The shuffle as specified: each 32-bit draw is split into its high and low
 * 16-bit halves, used in that order, one per attempt; halves left at the end
 * of a shuffle are dropped. Bounds above 2^16 use Lemire on a full draw.
 */
function referenceShuffle(values: Float64Array, next: () => number, swaps: Int32Array): void {
  const halves: number[] = [];
  for (let i = values.length - 1; i > 0; i--) {
    const bound = i + 1;
    let j = -1;
    while (j < 0) {
      if (bound > 65536) {
        const product = (next() >>> 0) * bound;
        if (product % 4294967296 >= (4294967296 - bound) % bound) j = Math.floor(product / 4294967296);
      } else {
        if (halves.length === 0) {
          const draw = next() >>> 0;
          halves.push(Math.floor(draw / 65536), draw % 65536);
        }
        const product = (halves.shift() as number) * bound;
        if (product % 65536 >= (65536 - bound) % bound) j = Math.floor(product / 65536);
      }
    }
    [values[i], values[j]] = [values[j], values[i]];
    swaps[i] = j;
  }
}

describe("RandomSource.shuffle", () => {
  it.each([2, 3, 37, 1000, 65536, 65537, 70001])(
    "n = %i: the same orders and swaps as Fisher–Yates drawn one pure-rand next() at a time, and the stream carries on unchanged",
    (n) => {
      const seed = 7 * n + 1;
      const source = createRandomSource(seed);
      const generator = xoroshiro128plus(seed);
      const next = () => generator.next();
      const fast = Float64Array.from({ length: n }, (_, i) => i);
      const reference = fast.slice();
      const fastSwaps = new Int32Array(n);
      const referenceSwaps = new Int32Array(n);
      for (let round = 0; round < (n > 10000 ? 2 : 12); round++) {
        source.shuffle(fast, fastSwaps);
        referenceShuffle(reference, next, referenceSwaps);
        expect(fast).toEqual(reference);
        expect(fastSwaps.subarray(1)).toEqual(referenceSwaps.subarray(1));
      }
      expect([source.nextUint32(), source.nextUint32()]).toEqual([next() >>> 0, next() >>> 0]);
    },
  );
});

/** Pair weights built the obvious way, with a Map per row. */
function referencePairs(weights: SpatialWeights): Map<string, number> {
  const pairs = new Map<string, number>();
  for (let i = 0; i < weights.ids.length; i++) {
    for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
      const j = weights.neighbours[p];
      if (j === i) continue;
      const key = `${Math.min(i, j)}-${Math.max(i, j)}`;
      pairs.set(key, (pairs.get(key) ?? 0) + weights.weights[p]);
    }
  }
  return pairs;
}

// Invented points; 3 nearest neighbours give one-way links (asymmetric weights).
const points = {
  ids: Array.from({ length: 40 }, (_, i) => `p${i}`),
  x: Float64Array.from({ length: 40 }, (_, i) => Math.cos(i * 2.3) * (3 + (i % 7))),
  y: Float64Array.from({ length: 40 }, (_, i) => Math.sin(i * 1.1) * (2 + (i % 5))),
  coordinates: "planar" as const,
};
const oneWay = rowStandardisedWeights(nearestNeighbourWeights(points, { k: 3 }));
const rook = rowStandardisedWeights(latticeWeights(9, 11, "rook"));
const selfLinked = withSelfLinks(rowStandardisedWeights(latticeWeights(6, 7, "queen")));

describe("pairWeights", () => {
  it("the nearest-neighbour fixture does have one-way links", () => {
    const linked = (i: number, j: number) => Array.from(oneWay.neighbours.subarray(oneWay.offsets[i], oneWay.offsets[i + 1])).includes(j);
    let oneWayLinks = 0;
    for (let i = 0; i < oneWay.ids.length; i++) {
      for (let p = oneWay.offsets[i]; p < oneWay.offsets[i + 1]; p++) if (!linked(oneWay.neighbours[p], i)) oneWayLinks++;
    }
    expect(oneWayLinks).toBeGreaterThan(0);
  });

  it.each([
    ["row-standardised rook lattice", rook],
    ["3 nearest neighbours (one-way links)", oneWay],
    ["queen lattice with self-links", selfLinked],
  ])("%s: c_ij = w_ij + w_ji over unordered pairs, rows ascending, degrees and total consistent", (_, weights) => {
    const pairs = pairWeights(weights);
    const reference = referencePairs(weights);
    const n = weights.ids.length;
    const seen = new Map<string, number>();
    const degree = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      for (let q = pairs.offsets[i]; q < pairs.offsets[i + 1]; q++) {
        const j = pairs.neighbours[q];
        expect(j).toBeGreaterThan(i);
        if (q > pairs.offsets[i]) expect(j).toBeGreaterThan(pairs.neighbours[q - 1]);
        seen.set(`${i}-${j}`, pairs.weights[q]);
        degree[i] += pairs.weights[q];
        degree[j] += pairs.weights[q];
      }
      let diagonal = 0;
      for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) if (weights.neighbours[p] === i) diagonal = weights.weights[p];
      expect(pairs.diagonal[i]).toBe(diagonal);
    }
    expect(seen).toEqual(reference);
    for (let i = 0; i < n; i++) expect(pairs.degree[i]).toBeCloseTo(degree[i], 12);
    expect(pairs.pairTotal).toBeCloseTo([...reference.values()].reduce((a, b) => a + b, 0), 12);
    expect(pairs.hasDiagonal).toBe(weights === selfLinked);
  });
});

/** Numerators over the full CSR links on the arrangements a loop of shuffles of one copy produces. */
function referenceSums(values: Float64Array, weights: SpatialWeights, permutations: number, seed: number, shift: number) {
  const random = createRandomSource(seed);
  const v = values.slice();
  const cross: number[] = [];
  const squared: number[] = [];
  const shifted: number[] = [];
  for (let r = 0; r < permutations; r++) {
    random.shuffle(v);
    let c = 0;
    let s = 0;
    let g = 0;
    for (let i = 0; i < v.length; i++) {
      for (let p = weights.offsets[i]; p < weights.offsets[i + 1]; p++) {
        const j = weights.neighbours[p];
        const w = weights.weights[p];
        c += w * v[i] * v[j];
        s += w * (v[i] - v[j]) ** 2;
        if (j !== i) g += w * (v[i] + shift) * (v[j] + shift);
      }
    }
    cross.push(c);
    squared.push(s);
    shifted.push(g);
  }
  return { cross, squared, shifted };
}

/** Moran's numerator one arrangement at a time over the pair rows, in the kernel's order of operations. */
function onePairRowAtATime(values: Float64Array, weights: SpatialWeights, permutations: number, seed: number): number[] {
  const pairs = pairWeights(weights);
  const random = createRandomSource(seed);
  const v = values.slice();
  const out: number[] = [];
  for (let r = 0; r < permutations; r++) {
    random.shuffle(v);
    let total = 0;
    for (let i = 0; i < v.length; i++) {
      let lag = 0;
      for (let q = pairs.offsets[i]; q < pairs.offsets[i + 1]; q++) lag += pairs.weights[q] * v[pairs.neighbours[q]];
      total += v[i] * lag;
    }
    out.push(total);
  }
  return out;
}

function centredValues(n: number, offset: number): Float64Array {
  const x = inventedValues(n, offset);
  const mean = x.reduce((a, b) => a + b, 0) / n;
  return Float64Array.from(x, (v) => v - mean);
}

describe("globalPermutationSums (four arrangements per pass)", () => {
  it.each([
    ["rook lattice, R = 99", rook, 99],
    ["rook lattice, R = 102 (a last group of two)", rook, 102],
    ["one-way links, R = 101", oneWay, 101],
    ["self-links, R = 103", selfLinked, 103],
  ])("%s: Moran, Geary and General G numerators equal the full-link evaluation on the same arrangements", (_, weights, R) => {
    const z = centredValues(weights.ids.length, 0.3);
    const shift = 4.25;
    const sums = globalPermutationSums(z, weights, R, createRandomSource(11), { squaredDifferences: true, shift });
    const reference = referenceSums(z, weights, R, 11, shift);
    expect(sums.crossProducts).toHaveLength(R);
    for (let r = 0; r < R; r++) {
      expect(sums.crossProducts[r]).toBeCloseTo(reference.cross[r], 11);
      expect(sums.squaredDifferences?.[r]).toBeCloseTo(reference.squared[r], 10);
      expect(sums.shiftedCrossProducts?.[r]).toBeCloseTo(reference.shifted[r], 9);
    }
  });

  it("without self-links, Moran's numerators are bit for bit those of one arrangement at a time (the layout changes no number)", () => {
    const z = centredValues(rook.ids.length, 1.1);
    const sums = globalPermutationSums(z, rook, 103, createRandomSource(5));
    expect(Array.from(sums.crossProducts)).toEqual(onePairRowAtATime(z, rook, 103, 5));
    expect(sums.squaredDifferences).toBeNull();
    expect(sums.shiftedCrossProducts).toBeNull();
  });

  it("consumes exactly the draws of R shuffles, whatever is requested", () => {
    const z = centredValues(rook.ids.length, 2);
    const plain = createRandomSource(3);
    const all = createRandomSource(3);
    const loop = createRandomSource(3);
    globalPermutationSums(z, rook, 101, plain);
    globalPermutationSums(z, rook, 101, all, { squaredDifferences: true, shift: 1 });
    const copy = z.slice();
    for (let r = 0; r < 101; r++) loop.shuffle(copy);
    const next = loop.nextUint32();
    expect(plain.nextUint32()).toBe(next);
    expect(all.nextUint32()).toBe(next);
  });
});

describe("a small weights object stays exact", () => {
  it("two regions linked both ways: one pair of weight w_01 + w_10", () => {
    const weights = weightsFromNeighbourLists(["a", "b"], [[1], [0]], { rule: "test", weightLists: [[0.25], [0.5]], transform: "none" });
    const pairs = pairWeights(weights);
    expect(Array.from(pairs.offsets)).toEqual([0, 1, 1]);
    expect(Array.from(pairs.neighbours)).toEqual([1]);
    expect(Array.from(pairs.weights)).toEqual([0.75]);
    expect(Array.from(pairs.degree)).toEqual([0.75, 0.75]);
  });
});

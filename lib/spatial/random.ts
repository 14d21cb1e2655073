/**
 * Seeded random numbers for permutation inference.
 *
 * The generator is xoroshiro128+ from the `pure-rand` package (Blackman &
 * Vigna's xoroshiro family), used through its mutating `next()` for speed. It
 * is driven only by 32-bit integer arithmetic, so the same seed produces the
 * same stream — and the same p-values — on every machine and JavaScript engine.
 */
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import type { RandomSource } from "./types";

const TWO_TO_32 = 4294967296;
const TWO_TO_21 = 2097152;

/**
 * Creates a seeded random source (xoroshiro128+ via `pure-rand`).
 *
 * `nextInt(bound)` uses Lemire's multiply-and-reject method: the 32-bit draw x
 * is multiplied by the bound (exact in a double when bound ≤ 2^21), the high
 * 32 bits are the result, and the rare draws that would introduce bias are
 * rejected — so every value in [0, bound) is exactly equally likely. Larger
 * bounds fall back to rejection sampling with a modulo.
 *
 * Source: D. Lemire (2019), "Fast random integer generation in an interval",
 * ACM Transactions on Modeling and Computer Simulation 29(1).
 *
 * @param seed an integer; only its low 32 bits are used (a non-integer throws).
 * @throws Error when `seed` is not a finite integer.
 * Cost: O(1) per draw.
 * @example
 *   const random = createRandomSource(42);
 *   random.nextInt(6); // the same value on every machine
 */
export function createRandomSource(seed: number): RandomSource {
  if (!Number.isInteger(seed)) {
    throw new Error(`The random seed must be an integer; got ${String(seed)}.`);
  }
  return new XoroshiroSource(seed | 0);
}

/** The engine's random source: a class (not closures) so V8 inlines its methods in hot loops. */
class XoroshiroSource implements RandomSource {
  private readonly generator: ReturnType<typeof xoroshiro128plus>;

  constructor(seed: number) {
    this.generator = xoroshiro128plus(seed);
  }

  nextUint32(): number {
    return this.generator.next() >>> 0;
  }

  nextInt(bound: number): number {
    const generator = this.generator;
    if (bound <= TWO_TO_21) {
      // Lemire: m = x·bound < 2^53 is exact; result = floor(m / 2^32), remainder m mod 2^32.
      // (floating-point % is slow; the division by 2^32 and the subtraction are exact)
      let product = (generator.next() >>> 0) * bound;
      let high = Math.floor(product / TWO_TO_32);
      let low = product - high * TWO_TO_32;
      if (low < bound) {
        const threshold = (TWO_TO_32 - bound) % bound;
        while (low < threshold) {
          product = (generator.next() >>> 0) * bound;
          high = Math.floor(product / TWO_TO_32);
          low = product - high * TWO_TO_32;
        }
      }
      return high;
    }
    // Rejection with modulo: accept x < bound·floor(2^32/bound).
    const limit = Math.floor(TWO_TO_32 / bound) * bound;
    let x = generator.next() >>> 0;
    while (x >= limit) x = generator.next() >>> 0;
    return x % bound;
  }

  nextFloat(): number {
    // 53 random bits: 26 from one draw and 27 from the next.
    const high = (this.generator.next() >>> 6) * 134217728; // 2^27
    const low = this.generator.next() >>> 5;
    return (high + low) / 9007199254740992; // 2^53
  }
}

/**
 * Validates a permutation count R: an integer from 99 to 99,999, or 0 (no
 * permutation test). Used by every permutation-based function.
 *
 * @throws Error naming the value when it is outside the allowed range.
 * Cost: O(1).
 * @example
 *   checkPermutationCount(999); // returns 999
 */
export function checkPermutationCount(permutations: number): number {
  if (permutations === 0) return 0;
  if (!Number.isInteger(permutations) || permutations < 99 || permutations > 99999) {
    throw new Error(
      `The number of permutations must be an integer from 99 to 99,999 (or 0 for none); got ${String(permutations)}.`,
    );
  }
  return permutations;
}

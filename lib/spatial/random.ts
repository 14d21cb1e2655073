/**
 * Seeded random numbers for permutation inference.
 *
 * The generator is xoroshiro128+ from the `pure-rand` package (Blackman &
 * Vigna's xoroshiro family), used through its mutating `next()` for speed. It
 * is driven only by 32-bit integer arithmetic, so the same seed produces the
 * same stream — and the same p-values — on every machine and JavaScript engine.
 *
 * The shuffle, the hot loop of every permutation test, steps the same
 * generator with its state held in local variables (read from and written back
 * to `pure-rand` through `getState` / `xoroshiro128plusFromState`): a method
 * call per draw costs about as much as the rest of the shuffle. The step is a
 * verbatim copy of `pure-rand`'s `next()`, so the stream is the same number
 * for number (tests/unit/spatial/random.test.ts checks it against the package).
 */
import { xoroshiro128plus, xoroshiro128plusFromState } from "pure-rand/generator/xoroshiro128plus";
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

/** Largest bound drawn from a 16-bit half of a 32-bit draw by the shuffle. */
const SIXTEEN_BIT_BOUNDS = 65536;

/**
 * Rejection thresholds of Lemire's method on 16-bit draws for every bound
 * b = 1 … min(n, 2^16): t[b] = (2^16 − b) mod b (a 16-bit x is accepted for
 * bound b when (x·b mod 2^16) ≥ t[b], which makes x·b div 2^16 exactly uniform
 * on [0, b)).
 *
 * Cost: O(min(n, 2^16)).
 * @example
 *   shuffleThresholds(10)[3]; // (65536 − 3) mod 3 = 1
 */
export function shuffleThresholds(n: number): Int32Array {
  const size = Math.min(n, SIXTEEN_BIT_BOUNDS);
  const thresholds = new Int32Array(size + 1);
  for (let b = 1; b <= size; b++) thresholds[b] = (SIXTEEN_BIT_BOUNDS - b) % b;
  return thresholds;
}

/**
 * Positions min(n, 2^16) − 1 … 1 of the shuffle described at
 * `XoroshiroSource.shuffle`, stepping the generator whose state
 * [s01, s00, s11, s10] is read from and written back to `state`. A function of
 * its own, with the state in locals, so that V8 keeps it in registers.
 */
function shuffleSixteenBit(values: Float64Array, thresholds: Int32Array, state: Int32Array, swaps: Int32Array | null): void {
  let s01 = state[0];
  let s00 = state[1];
  let s11 = state[2];
  let s10 = state[3];
  let buffer = 0;
  let haveHalf = false;
  for (let i = Math.min(values.length, SIXTEEN_BIT_BOUNDS) - 1; i > 0; i--) {
    const bound = i + 1;
    const threshold = thresholds[bound];
    let j: number;
    for (;;) {
      let x16: number;
      if (haveHalf) {
        x16 = buffer & 0xffff;
        haveHalf = false;
      } else {
        // pure-rand's xoroshiro128plus next(), verbatim: the 32-bit output, then the state update.
        buffer = (s00 + s10) | 0;
        const a0 = s10 ^ s00;
        const a1 = s11 ^ s01;
        const old00 = s00;
        const old01 = s01;
        s00 = (old00 << 24) ^ (old01 >>> 8) ^ a0 ^ (a0 << 16);
        s01 = (old01 << 24) ^ (old00 >>> 8) ^ a1 ^ ((a1 << 16) | (a0 >>> 16));
        s10 = (a1 << 5) ^ (a0 >>> 27);
        s11 = (a0 << 5) ^ (a1 >>> 27);
        x16 = buffer >>> 16;
        haveHalf = true;
      }
      const product = Math.imul(x16, bound); // x16·bound < 2^32: exact in the 32 bits
      if ((product & 0xffff) >= threshold) {
        j = product >>> 16;
        break;
      }
    }
    const t = values[i];
    values[i] = values[j];
    values[j] = t;
    if (swaps !== null) swaps[i] = j;
  }
  state[0] = s01;
  state[1] = s00;
  state[2] = s11;
  state[3] = s10;
}

/** {@link shuffleThresholds} for every 16-bit bound (256 KB, built once when the module loads, about 0.3 ms). */
const SIXTEEN_BIT_THRESHOLDS = shuffleThresholds(SIXTEEN_BIT_BOUNDS);

/** The engine's random source: a class (not closures) so V8 inlines its methods in hot loops. */
class XoroshiroSource implements RandomSource {
  private generator: ReturnType<typeof xoroshiro128plus>;
  /** The generator's state [s01, s00, s11, s10] while a shuffle runs. */
  private readonly state = new Int32Array(4);

  constructor(seed: number) {
    this.generator = xoroshiro128plus(seed);
  }

  /**
   * Fisher–Yates shuffle in place (R. Durstenfeld 1964, CACM 7(7), algorithm
   * 235): for i = n−1 … 1, swap values[i] with values[j], j uniform in
   * [0, i]. Bounds up to 2^16 take the two 16-bit halves of one 32-bit draw in
   * turn (high half first; a half left over at the end of a shuffle is
   * dropped), mapped by Lemire's multiply-and-reject, which is exactly
   * uniform and halves the generator calls; larger bounds (more than 65,536
   * values) use {@link nextInt}.
   *
   * Cost: O(n); allocates only the state hand-over (two small arrays).
   * @example
   *   createRandomSource(3).shuffle(Float64Array.of(1, 2, 3, 4));
   */
  shuffle(values: Float64Array, swaps: Int32Array | null = null): void {
    const n = values.length;
    if (n > SIXTEEN_BIT_BOUNDS) this.shuffleLargeBounds(values, swaps);
    const state = this.takeState();
    shuffleSixteenBit(values, SIXTEEN_BIT_THRESHOLDS, state, swaps);
    this.putState(state);
  }

  /** The generator's state [s01, s00, s11, s10], copied out of `pure-rand` for {@link shuffleSixteenBit}. */
  private takeState(): Int32Array {
    const current = this.generator.getState();
    const state = this.state;
    for (let k = 0; k < 4; k++) state[k] = current[k];
    return state;
  }

  /** Hands the advanced state back to `pure-rand`, which carries on from it. */
  private putState(state: Int32Array): void {
    this.generator = xoroshiro128plusFromState([state[0], state[1], state[2], state[3]]);
  }

  /**
   * Positions n−1 … 2^16 of a shuffle of more than 65,536 values: bounds
   * above 2^16, one full draw each. A method of its own: inside `shuffle` this
   * rarely used loop made V8 compile the common path noticeably slower.
   */
  private shuffleLargeBounds(values: Float64Array, swaps: Int32Array | null): void {
    for (let i = values.length - 1; i >= SIXTEEN_BIT_BOUNDS; i--) {
      const j = this.nextInt(i + 1);
      const t = values[i];
      values[i] = values[j];
      values[j] = t;
      if (swaps !== null) swaps[i] = j;
    }
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

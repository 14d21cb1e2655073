import { checkPermutationCount, createRandomSource } from "@/lib/spatial";
import { shuffleInPlace } from "@/lib/spatial/permutation";
import { chiSquareUpperTail } from "@/lib/spatial/distributions";

describe("seeded random source", () => {
  test("same seed, same stream; different seeds, different streams", () => {
    const a = createRandomSource(7);
    const b = createRandomSource(7);
    const c = createRandomSource(8);
    const first = Array.from({ length: 20 }, () => a.nextUint32());
    expect(Array.from({ length: 20 }, () => b.nextUint32())).toEqual(first);
    expect(Array.from({ length: 20 }, () => c.nextUint32())).not.toEqual(first);
    expect(() => createRandomSource(1.5)).toThrow(/integer/);
  });

  test("nextInt is uniform: chi-square over 7 bins of 70,000 draws is not extreme", () => {
    const random = createRandomSource(3);
    const counts = new Array(7).fill(0);
    for (let k = 0; k < 70000; k++) counts[random.nextInt(7)]++;
    const chi = counts.reduce((s, c) => s + (c - 10000) ** 2 / 10000, 0);
    expect(chiSquareUpperTail(chi, 6)).toBeGreaterThan(0.001);
  });

  test("nextFloat is in [0, 1)", () => {
    const random = createRandomSource(4);
    for (let k = 0; k < 10000; k++) {
      const u = random.nextFloat();
      expect(u).toBeGreaterThanOrEqual(0);
      expect(u).toBeLessThan(1);
    }
  });

  test("the shuffle reaches all 3! = 6 orders equally often", () => {
    const random = createRandomSource(9);
    const counts = new Map<string, number>();
    for (let k = 0; k < 60000; k++) {
      const v = Float64Array.from([0, 1, 2]);
      shuffleInPlace(v, random);
      const key = Array.from(v).join("");
      counts.set(key, (counts.get(key) ?? 0) + 1);
    }
    expect(counts.size).toBe(6);
    const chi = [...counts.values()].reduce((s, c) => s + (c - 10000) ** 2 / 10000, 0);
    expect(chiSquareUpperTail(chi, 5)).toBeGreaterThan(0.001);
  });

  test("permutation counts: 0 or 99..99,999", () => {
    expect(checkPermutationCount(0)).toBe(0);
    expect(checkPermutationCount(999)).toBe(999);
    expect(() => checkPermutationCount(98)).toThrow();
    expect(() => checkPermutationCount(999.5)).toThrow();
  });
});

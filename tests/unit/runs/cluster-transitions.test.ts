import { clusterTransitionTable } from "@/lib/runs/compare";
import type { LocalFields } from "@/lib/runs/types";
import { chiSquareIndependence, type ClusterClass } from "@/lib/spatial";

// clusterTransitionTable reads only the region ids and their cluster classes;
// the other local fields are irrelevant here, hence the cast.
const local = (pairs: [string, ClusterClass][]) => ({ ids: pairs.map((p) => p[0]), cluster: pairs.map((p) => p[1]) }) as unknown as LocalFields;

describe("cluster transition table", () => {
  it("counts moves between classes by region id and tests the later class's independence from the earlier on the same counts", () => {
    const classes: ClusterClass[] = ["HH", "LL", "not-significant"];
    const earlier: [string, ClusterClass][] = [];
    const later: [string, ClusterClass][] = [];
    // 30 regions: most keep their class, some move; one region exists only earlier, one only later.
    for (let k = 0; k < 30; k++) {
      const from = classes[k % 3];
      const to = k % 5 === 0 ? classes[(k + 1) % 3] : from;
      earlier.push([`R${k}`, from]);
      later.push([`R${k}`, to]);
    }
    earlier.push(["only-earlier", "HH"]);
    later.push(["only-later", "LL"]);
    const table = clusterTransitionTable(local(earlier), local(later.reverse()));
    expect(table.unmatched).toBe(2);
    expect(table.moved).toBe(6);
    expect(table.counts.flat().reduce((a, v) => a + v, 0)).toBe(30);
    expect(table.independence).toEqual(chiSquareIndependence(table.counts));
    expect(table.independence).toMatchObject({ n: 30, rows: 3, columns: 3, degreesOfFreedom: 4 });
    expect(table.independence!.p).toBeLessThan(0.001);
  });

  it("has no independence test when every region sits in one class in either period", () => {
    const same: [string, ClusterClass][] = [
      ["A", "not-significant"],
      ["B", "not-significant"],
      ["C", "not-significant"],
    ];
    expect(clusterTransitionTable(local(same), local(same)).independence).toBeNull();
  });
});

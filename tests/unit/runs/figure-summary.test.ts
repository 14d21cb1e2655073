import { choroplethSummary, clusterMapSummary, giStarMapSummary, scatterSummary, seriesSummary } from "@/lib/runs/figure-summary";

describe("figure summaries (the text alternative of maps and charts)", () => {
  it("counts the cluster classes of a map, leaving out empty ones", () => {
    expect(clusterMapSummary("Unemployment rate", "2015", { HH: 12, LL: 9, HL: 0, LH: 1, "not-significant": 217, "no-neighbours": 1 })).toBe(
      "Local clusters of Unemployment rate in 2015: 12 High-High, 9 Low-Low, 1 Low-High, 217 Not significant, 1 No neighbours (240 regions).",
    );
    expect(clusterMapSummary("Unemployment rate", "2015", null)).toMatch(/no local results/);
  });

  it("counts hot and cold spots", () => {
    expect(giStarMapSummary("Income", "2020", { hot: 3, cold: 0, "not-significant": 7, "no-neighbours": 0 })).toBe("Map of hot and cold spots (local Gi*) of Income in 2020: 3 Hot spot, 7 Not significant (10 regions).");
  });

  it("names the lowest and highest regions of a choropleth, its median and the regions without a value", () => {
    expect(choroplethSummary("Rate", "2019", { A: 1, B: 3, C: 2, D: null }, { unit: "%", names: { A: "Aarveld", B: "Bosk" } })).toBe(
      "Rate in 2019 ranges from 1 % (Aarveld) to 3 % (Bosk), median 2 %, over 3 regions; 1 region has no value.",
    );
    expect(choroplethSummary("Rate", "2019", { A: null })).toBe("Rate in 2019: no region has a value; 1 region has no value.");
  });

  it("describes a scatter plot by its slope and the points in the clustering quadrants", () => {
    expect(scatterSummary("Rate", "2019", [{ x: 1, y: 1 }, { x: -1, y: -2 }, { x: 1, y: -1 }], 0.5)).toBe(
      "Moran scatter plot of Rate in 2019: 3 regions, slope 0.5; 2 of them lie in the High-High or Low-Low quadrants (value and neighbours' average on the same side of the mean).",
    );
  });

  it("gives a series' lowest, highest and last values", () => {
    expect(seriesSummary("Moran's I", [{ label: "2008", value: 0.2 }, { label: "2009", value: 0.1 }, { label: "2010", value: null }, { label: "2011", value: 0.4 }])).toBe(
      "Moran's I, 2008–2011: lowest 0.1 in 2009, highest 0.4 in 2011, last 0.4 in 2011; 1 period without a value.",
    );
    expect(seriesSummary("I", [])).toBe("I: no values.");
  });
});

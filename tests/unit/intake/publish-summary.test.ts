import { publishCounts } from "@/lib/intake/publish-summary";

describe("publishCounts: what the publish confirmation names", () => {
  test("a panel: matched regions, indicators, periods, observations and how many are missing", () => {
    const report = {
      regions: { matched: 49, inPanel: 49 },
      indicators: ["income", "jobless"],
      periods: ["2019", "2020"],
      observations: 196,
      missing: { income: 2, jobless: 1 },
    };
    expect(publishCounts({ kind: "panel", count: 98, report })).toEqual({ regions: 49, indicators: ["income", "jobless"], periods: ["2019", "2020"], observations: 196, missing: 3 });
  });

  test("a boundary version: its region count only", () => {
    expect(publishCounts({ kind: "boundaries", count: 9, report: { ok: true } })).toEqual({ regions: 9, indicators: [], periods: [], observations: null, missing: 0 });
  });

  test("a panel without a report says nothing it does not know", () => {
    expect(publishCounts({ kind: "panel", count: 12, report: null })).toEqual({ regions: null, indicators: [], periods: [], observations: null, missing: 0 });
  });
});

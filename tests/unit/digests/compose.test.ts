import { composeDigest, summariseDigest, type DigestResultRow } from "@/lib/digests/compose";
import { renderIndicatorChart } from "@/lib/digests/chart";
import { DIGEST_CAUTION, renderDigest } from "@/lib/digests/render";

function row(indicator: string, period: string, index: number, fields: Partial<DigestResultRow> = {}): DigestResultRow {
  return { indicator, period, periodIndex: index, I: 0.1, expectedI: -0.01, deltaI: null, significance: "not-significant", localClusters: null, ...fields };
}

const all = { scope: "all" as const, indicatorCodes: [], threshold: "every_change" as const };

describe("composeDigest", () => {
  const previous = [
    row("unemployment", "2012", 0, { I: 0.2, significance: "not-significant", localClusters: { a: "HH" } }),
    row("unemployment", "2013", 1, { I: 0.25, significance: "not-significant" }),
    row("broadband", "2012", 0, { I: 0.5, significance: "clustering" }),
  ];
  const current = [
    row("unemployment", "2012", 0, { I: 0.2, significance: "not-significant", localClusters: { a: "HH", b: "HH", c: "LL", d: "not-significant" } }),
    row("unemployment", "2013", 1, { I: 0.45, significance: "clustering" }),
    row("broadband", "2012", 0, { I: 0.48, significance: "clustering" }),
    row("broadband", "2013", 1, { I: 0.1, deltaI: -0.38, significance: "not-significant" }),
  ];
  const names: Record<string, string> = { a: "Aldmoor", b: "Brennick", c: "Carrowfield" };

  it("lists class changes, largest changes in I (biggest first) and newly significant clusters by class with names", () => {
    const d = composeDigest(previous, current, all, (code) => names[code] ?? code);
    expect(d.classChanges).toEqual([{ indicator: "unemployment", period: "2013", before: "not-significant", after: "clustering" }]);
    expect(d.largestChanges.map((c) => [c.indicator, c.period, c.against])).toEqual([
      ["broadband", "2013", "previous-period"],
      ["unemployment", "2013", "previous-results"],
      ["broadband", "2012", "previous-results"],
    ]);
    expect(d.largestChanges[0].change).toBeCloseTo(-0.38, 12);
    expect(d.largestChanges[1].change).toBeCloseTo(0.2, 12);
    // "a" was already High-High before, so only Brennick is new; "not-significant" never counts.
    expect(d.newClusters).toEqual([
      { indicator: "unemployment", period: "2012", cluster: "HH", count: 1, regions: ["Brennick"] },
      { indicator: "unemployment", period: "2012", cluster: "LL", count: 1, regions: ["Carrowfield"] },
    ]);
    expect(d.empty).toBe(false);
    expect(summariseDigest(d)).toMatchObject({ classChanges: 1, largestChanges: 3, newClusters: 2 });
  });

  it("keeps only the chosen indicators", () => {
    const d = composeDigest(previous, current, { scope: "chosen", indicatorCodes: ["broadband"], threshold: "every_change" });
    expect(d.indicators).toEqual(["broadband"]);
    expect(d.classChanges).toEqual([]);
    expect(d.newClusters).toEqual([]);
    expect(d.largestChanges.every((c) => c.indicator === "broadband")).toBe(true);
  });

  it("with the class-changes threshold, leaves out movements and clusters", () => {
    const d = composeDigest(previous, current, { ...all, threshold: "class_changes" });
    expect(d.classChanges).toHaveLength(1);
    expect(d.largestChanges).toEqual([]);
    expect(d.newClusters).toEqual([]);
    expect(d.indicators).toEqual(["unemployment"]);
  });

  it("is empty when the results are identical (a rerun)", () => {
    const d = composeDigest(current, current, all);
    expect(d).toMatchObject({ empty: true, classChanges: [], largestChanges: [], newClusters: [], indicators: [] });
  });

  it("a first digest (no previous results) reports significant periods as class changes", () => {
    const d = composeDigest([], current, { ...all, threshold: "class_changes" });
    expect(d.classChanges.map((c) => `${c.indicator} ${c.period} ${c.before}→${c.after}`)).toEqual(["broadband 2012 null→clustering", "unemployment 2013 null→clustering"]);
  });
});

describe("renderDigest and the chart", () => {
  it("renders a titled SVG chart on the server", () => {
    const svg = renderIndicatorChart("Unemployment: Moran's I by period", [
      { period: "2012", I: 0.2, expectedI: -0.01, significance: "not-significant" },
      { period: "2013", I: 0.45, expectedI: -0.01, significance: "clustering" },
    ]);
    expect(svg.startsWith("<svg")).toBe(true);
    expect(svg).toContain("Unemployment: Moran");
    expect(svg).toContain("Period");
    expect(svg).toContain("#c98a1b");
  });

  it("renders HTML and text with the changes, links into the app, the caution and the unsubscribe link, escaping names", () => {
    const content = composeDigest([], [row("u<x>", "2013", 1, { I: 0.45, significance: "clustering", localClusters: { a: "HH" } })], all, () => "Brennick & Co");
    const out = renderDigest({
      content,
      workspace: { slug: "veld", name: "Veldmark desk" },
      recipientName: "Ada",
      coverage: "results of run 7",
      runId: 7,
      indicatorLabels: new Map([["u<x>", "Unemployment <rate>"]]),
      charts: new Map([["u<x>", "<svg id=\"c\"></svg>"]]),
      baseUrl: "http://app.test/",
      unsubscribeUrl: "http://app.test/api/digests/unsubscribe?token=abc",
    });
    expect(out.subject).toBe("Tessera digest · Veldmark desk: 1 class change (results of run 7)");
    expect(out.text).toContain("Unemployment <rate>, 2013: not analysed → Significant clustering");
    expect(out.text).toContain("1 High-High — Brennick & Co");
    expect(out.text).toContain("http://app.test/w/veld/timeline?indicator=u%3Cx%3E&run=7");
    expect(out.text).toContain(DIGEST_CAUTION);
    expect(out.html).toContain("Unemployment &lt;rate&gt;");
    expect(out.html).toContain("Brennick &amp; Co");
    expect(out.html).toContain('<svg id="c"></svg>');
    expect(out.html).toContain("#1e2a44");
    expect(out.html).toContain('href="http://app.test/api/digests/unsubscribe?token=abc"');
  });

  it("says so when nothing changed", () => {
    const out = renderDigest({
      content: composeDigest([], [], all),
      workspace: { slug: "veld", name: "Veldmark desk" },
      recipientName: "Ada",
      coverage: "week 2026-W49",
      runId: null,
      indicatorLabels: new Map(),
      charts: new Map(),
      baseUrl: "http://app.test",
      unsubscribeUrl: "http://app.test/u",
    });
    expect(out.subject).toContain("nothing changed");
    expect(out.text).toContain("Nothing changed in the indicators you follow");
  });
});

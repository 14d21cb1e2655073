import { composeDigest, summariseDigest, type DigestComparison, type DigestResultRow } from "@/lib/digests/compose";
import { renderIndicatorChart, stableSvgIds } from "@/lib/digests/chart";
import { DIGEST_CAUTION, renderDigest } from "@/lib/digests/render";

function row(indicator: string, period: string, index: number, fields: Partial<DigestResultRow> = {}): DigestResultRow {
  return { indicator, period, periodIndex: index, I: 0.1, expectedI: -0.01, deltaI: null, significance: "not-significant", localClusters: null, ...fields };
}

const all = { scope: "all" as const, indicatorCodes: [], threshold: "every_change" as const };
const FIRST: DigestComparison = { kind: "first" };
const since = (rows: readonly DigestResultRow[], runId = 7): DigestComparison => ({ kind: "previous-digest", runId, rows });

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

describe("composeDigest", () => {
  const names: Record<string, string> = { a: "Aldmoor", b: "Brennick", c: "Carrowfield" };

  it("lists class changes, largest changes in I (biggest first) and newly significant clusters by class with names", () => {
    const d = composeDigest(since(previous), current, all, (code) => names[code] ?? code);
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
    const d = composeDigest(since(previous), current, { scope: "chosen", indicatorCodes: ["broadband"], threshold: "every_change" });
    expect(d.indicators).toEqual(["broadband"]);
    expect(d.classChanges).toEqual([]);
    expect(d.newClusters).toEqual([]);
    expect(d.largestChanges.every((c) => c.indicator === "broadband")).toBe(true);
  });

  it("with the class-changes threshold, leaves out movements and clusters", () => {
    const d = composeDigest(since(previous), current, { ...all, threshold: "class_changes" });
    expect(d.classChanges).toHaveLength(1);
    expect(d.largestChanges).toEqual([]);
    expect(d.newClusters).toEqual([]);
    expect(d.indicators).toEqual(["unemployment"]);
  });

  it("is empty when the results are identical (a rerun)", () => {
    const d = composeDigest(since(current), current, all);
    expect(d).toMatchObject({ empty: true, classChanges: [], largestChanges: [], newClusters: [], indicators: [] });
  });

  it("a first digest compares nothing: it lists what is significant now and changes within the run only", () => {
    const d = composeDigest(FIRST, current, all);
    expect(d.baseline).toEqual({ kind: "first" });
    expect(d.classChanges.map((c) => `${c.indicator} ${c.period} ${c.before}→${c.after}`)).toEqual(["broadband 2012 null→clustering", "unemployment 2013 null→clustering"]);
    expect(d.largestChanges.map((c) => c.against)).toEqual(["previous-period"]);
  });

  it("after a change of method: no change in I at all, the method change leads, and it is never empty while a result is in scope", () => {
    const changed: DigestComparison = { kind: "method-changed", runId: 7, sentence: "weights changed from queen to rook; no comparison" };
    const d = composeDigest(changed, current, all);
    expect(d.baseline).toEqual(changed);
    expect(d.largestChanges).toEqual([]);
    expect(d.classChanges.every((c) => c.before === null)).toBe(true);
    const quiet = composeDigest(changed, [row("broadband", "2012", 0, { I: 0.01, significance: "not-significant" })], all);
    expect(quiet).toMatchObject({ empty: false, largestChanges: [], classChanges: [], newClusters: [] });
    expect(composeDigest(changed, current, { scope: "chosen", indicatorCodes: ["nothing-here"], threshold: "every_change" }).empty).toBe(true);
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

  it("names the chart's ids and classes the same whichever process drew it, and apart per chart", () => {
    const points = [
      { period: "2012", I: 0.2, expectedI: -0.01, significance: "not-significant" as const },
      { period: "2013", I: 0.45, expectedI: -0.01, significance: "clustering" as const },
    ];
    const first = renderIndicatorChart("t", points);
    const later = renderIndicatorChart("t", points);
    expect(later).not.toBe(first); // ECharts' counters moved on
    expect(stableSvgIds(later, "tc0")).toBe(stableSvgIds(first, "tc0"));
    expect(stableSvgIds(first, "tc0")).not.toMatch(/zr\d/);
    expect(stableSvgIds(first, "tc0")).toContain("tc0-cls-0");
    expect(stableSvgIds(first, "tc1")).not.toContain("tc0-");
  });

  it("renders HTML and text with the changes, links into the app, the caution and the unsubscribe link, escaping names", () => {
    const content = composeDigest(FIRST, [row("u<x>", "2013", 1, { I: 0.45, significance: "clustering", localClusters: { a: "HH" } })], all, () => "Brennick & Co");
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
    expect(out.subject).toBe("Tessera digest · Veldmark desk: 1 significant indicator-period (results of run 7)");
    expect(out.text).toContain("Your first digest of these results: there is no previous digest to compare with");
    expect(out.text).toContain("Significant in run 7:\n- Unemployment <rate>, 2013: Significant clustering");
    expect(out.text).not.toContain("since your previous digest");
    expect(out.text).toContain("1 High-High — Brennick & Co");
    expect(out.text).toContain("http://app.test/w/veld/timeline?indicator=u%3Cx%3E&run=7");
    expect(out.text).toContain(DIGEST_CAUTION);
    expect(out.html).toContain("Unemployment &lt;rate&gt;");
    expect(out.html).toContain("Brennick &amp; Co");
    // The chart is an image with a text alternative; the mail says its language; the text part carries the same news.
    expect(out.html).toContain(`<svg role="img" aria-label="Chart of Moran&#39;s I of Unemployment &lt;rate&gt; by period, with E[I] dashed and significant periods in ochre; the numbers are listed above." id="c"></svg>`);
    expect(out.html).toContain('<html lang="en">');
    expect(out.text).toContain("Unemployment <rate>");
    expect(out.text).not.toMatch(/<svg/);
    expect(out.html).toContain("#1e2a44");
    expect(out.html).toContain('href="http://app.test/api/digests/unsubscribe?token=abc"');
  });

  const renderOf = (content: ReturnType<typeof composeDigest>, runId: number | null = 9) =>
    renderDigest({
      content,
      workspace: { slug: "veld", name: "Veldmark desk" },
      recipientName: "Ada",
      coverage: "on request",
      runId,
      runMethod: "weights rook, transform row-standardised",
      indicatorLabels: new Map([["unemployment", "Unemployment rate"], ["broadband", "Broadband"]]),
      charts: new Map(),
      baseUrl: "http://app.test",
      unsubscribeUrl: "http://app.test/u",
    });

  it("against a previous digest: class changes with arrows and changes in I since that digest, naming the run compared with", () => {
    const out = renderOf(composeDigest(since(previous, 7), current, all));
    expect(out.subject).toContain("1 class change");
    expect(out.text).toContain("Compared with run 7, which your previous digest reported (same panel, same method).");
    expect(out.text).toContain("Unemployment rate, 2013: Not significant → Significant clustering");
    expect(out.text).toMatch(/Unemployment rate, 2013: I = 0\.450 \(\+0\.200 since your previous digest\)/);
    expect(out.text).toContain("Method of run 9: weights rook, transform row-standardised");
  });

  it("after a change of method: says so first, and shows no change since the previous digest and no signed change at all", () => {
    const out = renderOf(composeDigest({ kind: "method-changed", runId: 7, sentence: "weights changed from queen to rook; no comparison" }, current, all));
    expect(out.subject).toBe("Tessera digest · Veldmark desk: method changed, no comparison (on request)");
    expect(out.text).toContain("Method changed since your previous digest (run 7): weights changed from queen to rook; no comparison.");
    expect(out.html).toContain("weights changed from queen to rook; no comparison");
    expect(out.text).not.toContain("since your previous digest)");
    expect(out.text).not.toMatch(/[+−]\d\.\d{3}/);
    expect(out.text).not.toContain("→");
  });

  it("says so when nothing changed", () => {
    const nothing = renderOf(composeDigest(since(current), current, all));
    expect(nothing.subject).toContain("nothing changed");
    expect(nothing.text).toContain("Nothing changed in the indicators you follow since your previous digest.");
    const noRun = renderOf(composeDigest(FIRST, [], all), null);
    expect(noRun.subject).toContain("nothing to report");
    expect(noRun.text).toContain("There is no completed run in this workspace yet");
    expect(noRun.text).not.toContain("since your previous digest");
  });

  it("a first digest with nothing significant says there is nothing to report, not that nothing changed", () => {
    const out = renderOf(composeDigest(FIRST, [row("broadband", "2012", 0, { significance: "not-significant" })], all));
    expect(out.subject).toContain("nothing to report");
    expect(out.text).toContain("Nothing in the indicators you follow is significant or moved between periods in run 9.");
    expect(out.text).not.toContain("since your previous digest");
  });

  it("says so when nothing changed (no run at all, week coverage)", () => {
    const out = renderDigest({
      content: composeDigest(FIRST, [], all),
      workspace: { slug: "veld", name: "Veldmark desk" },
      recipientName: "Ada",
      coverage: "week 2026-W49",
      runId: null,
      indicatorLabels: new Map(),
      charts: new Map(),
      baseUrl: "http://app.test",
      unsubscribeUrl: "http://app.test/u",
    });
    expect(out.subject).toBe("Tessera digest · Veldmark desk: nothing to report (week 2026-W49)");
  });
});

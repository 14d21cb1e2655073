import { composeDigest, type DigestResultRow } from "@/lib/digests/compose";
import { renderDigest } from "@/lib/digests/render";

// A digest names runs as every screen does (issue 13, item 7): by the
// workspace's run number with panel version, weights, transform and
// permutations, never by the global id.

const row = (period: string, index: number, fields: Partial<DigestResultRow> = {}): DigestResultRow => ({
  indicator: "unemployment",
  period,
  periodIndex: index,
  I: 0.2,
  expectedI: -0.01,
  deltaI: null,
  significance: "clustering",
  localClusters: null,
  ...fields,
});
const all = { scope: "all" as const, indicatorCodes: [], threshold: "every_change" as const };
const QUEEN = "Run 3 · Regional panel v2 · queen, row-standardised · 999 perm.";
const ROOK = "Run 4 · Regional panel v2 · rook, row-standardised · 999 perm.";

function render(content: ReturnType<typeof composeDigest>, labels: { runLabel?: string; baselineRunLabel?: string }) {
  return renderDigest({
    content,
    workspace: { slug: "veld", name: "Veldmark desk" },
    recipientName: "Ada",
    coverage: "results of Run 4",
    runId: 4123,
    ...labels,
    indicatorLabels: new Map([["unemployment", "Unemployment rate"]]),
    charts: new Map(),
    baseUrl: "http://app.test",
    unsubscribeUrl: "http://app.test/u",
  });
}

describe("run labels in a digest", () => {
  it("a first digest names its run by its label, and links by the global id", () => {
    const out = render(composeDigest({ kind: "first" }, [row("2013", 1)], all), { runLabel: ROOK });
    expect(out.text).toContain(`this shows where ${ROOK} stands`);
    expect(out.text).toContain(`Significant in ${ROOK}:`);
    expect(out.text).not.toMatch(/run 4123\b/);
    expect(out.text).toContain("run=4123");
  });

  it("a change of method names both runs by their labels, so queen and rook are told apart", () => {
    const out = render(composeDigest({ kind: "method-changed", runId: 4001, sentence: "weights changed from queen to rook; no comparison" }, [row("2013", 1)], all), {
      runLabel: ROOK,
      baselineRunLabel: QUEEN,
    });
    expect(out.text).toContain(`Method changed since your previous digest (${QUEEN}): weights changed from queen to rook; no comparison. Below is where ${ROOK} stands on its own.`);
    expect(out.text).not.toMatch(/run 4001\b/);
  });

  it("a comparison names the run compared with by its label", () => {
    const previous = [row("2013", 1, { significance: "not-significant" })];
    const out = render(composeDigest({ kind: "previous-digest", runId: 4001, rows: previous }, [row("2013", 1)], all), { runLabel: ROOK.replace("rook", "queen"), baselineRunLabel: QUEEN });
    expect(out.text).toContain(`Compared with ${QUEEN}, which your previous digest reported (same panel, same method).`);
  });
});

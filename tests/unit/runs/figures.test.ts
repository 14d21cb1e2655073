import { DOMParser, type Document as XmlDocument, type Element as XmlElement } from "@xmldom/xmldom";
import { CAUTIONS } from "@/lib/runs/cautions";
import {
  composeFigure,
  crosswalkSourceLine,
  fileNamePart,
  figureCautionKeys,
  figureCautions,
  figureFileName,
  figureSize,
  figureSourceLine,
  FIGURE_FONT,
  type FigureInput,
  type FigureSourceRun,
} from "@/lib/runs/figures";
import { echartsFigureBody } from "@/components/figures/echarts-body";

// Downloaded figures (docs/exports.md, "Figures"): one standalone SVG with title, units, legend,
// source line and cautions, that any XML reader takes, whatever the names in it.

const run: FigureSourceRun = {
  id: 12,
  number: 3,
  panelName: "Veldmark regional panel",
  panelVersion: 2,
  params: { weights: "queen", transform: "row-standardised", permutations: 999 },
};

/** Parses as XML or fails with the parser's own message (xmldom reports problems through onError). */
function parse(svg: string): XmlDocument {
  const problems: string[] = [];
  const doc = new DOMParser({ onError: (level, message) => void (level !== "warning" && problems.push(`${level}: ${message}`)) }).parseFromString(svg, "image/svg+xml");
  expect(problems).toEqual([]);
  return doc;
}

function texts(doc: XmlDocument, className: string): string[] {
  const groups = Array.from(doc.getElementsByTagName("g")).filter((g) => g.getAttribute("class") === className);
  return groups.map((g) => Array.from(g.getElementsByTagName("text")).map((t) => t.textContent ?? "").join(" "));
}

const bodySvg = '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 460 420" class="h-auto w-full" width="99"><path d="M0 0L10 10Z" fill="#9a3412"/></svg>';

function figure(overrides: Partial<FigureInput> = {}): FigureInput {
  return {
    title: "Local clusters of unemployment rate, 2013",
    units: "classes of local Moran's I (no units)",
    legend: [
      { kind: "swatch", label: "High-High (12)", colour: "#9a3412" },
      { kind: "hatch", label: "No neighbours (1)" },
      { kind: "line", label: "E[I]", colour: "#94a1bd", dash: "dashed" },
      { kind: "point", label: "Significant after correction", colour: "#c98a1b" },
      { kind: "scale", label: "Unemployment rate", stops: ["#ffffe5", "#fe9929", "#662506"], low: "2.1 %", high: "14.8 %" },
    ],
    sourceLine: figureSourceLine(run, { periods: ["2013"] }),
    cautions: figureCautions("cluster-map"),
    body: { svg: bodySvg, width: 600, height: 548 },
    ...overrides,
  };
}

describe("composeFigure", () => {
  it("writes one standalone SVG that parses as XML, with title, units, every legend entry, the source line and the cautions", () => {
    const svg = composeFigure(figure());
    const doc = parse(svg);
    const root = doc.documentElement as XmlElement;
    expect(root.tagName).toBe("svg");
    expect(root.getAttribute("xmlns")).toBe("http://www.w3.org/2000/svg");
    const { width, height } = figureSize(svg);
    expect(root.getAttribute("viewBox")).toBe(`0 0 ${width} ${height}`);
    expect(width).toBeGreaterThanOrEqual(600);
    expect(height).toBeGreaterThan(548);
    expect(root.getAttribute("font-family")).toBe(FIGURE_FONT);
    expect(svg).not.toMatch(/@import|url\(http|<link|font-face|<script/i);

    expect(doc.getElementsByTagName("title")[0].textContent).toBe("Local clusters of unemployment rate, 2013");
    expect(texts(doc, "figure-title").join(" ")).toBe("Local clusters of unemployment rate, 2013");
    expect(texts(doc, "figure-units").join(" ")).toBe("Units: classes of local Moran's I (no units)");
    const legend = texts(doc, "legend-item");
    expect(legend).toEqual(["High-High (12)", "No neighbours (1)", "E[I]", "Significant after correction", "Unemployment rate 2.1 % 14.8 %"]);
    expect(texts(doc, "figure-source").join(" ")).toBe(
      "Source: Veldmark regional panel v2 · Run 3 (id 12) · weights queen, row-standardised · 999 permutations · period 2013 · Tessera",
    );
    const cautions = texts(doc, "figure-caution");
    expect(cautions).toHaveLength(figureCautions("cluster-map").length);
    expect(cautions[0]).toBe(`Caution: ${CAUTIONS.causation.title}. ${CAUTIONS.causation.body}`);
  });

  it("places the body at its own size, keeping its viewBox and content", () => {
    const doc = parse(composeFigure(figure()));
    const inner = Array.from(doc.getElementsByTagName("svg")).filter((s) => s !== doc.documentElement);
    expect(inner).toHaveLength(1);
    expect(inner[0].getAttribute("width")).toBe("600");
    expect(inner[0].getAttribute("height")).toBe("548");
    expect(inner[0].getAttribute("viewBox")).toBe("0 0 460 420");
    expect(inner[0].getElementsByTagName("path")[0].getAttribute("fill")).toBe("#9a3412");
    // A body with an XML declaration (ECharts' own) and no viewBox is placed too.
    const other = parse(composeFigure(figure({ body: { svg: '<?xml version="1.0"?>\n<svg xmlns="http://www.w3.org/2000/svg"><g/></svg>', width: 300, height: 200 } })));
    const placed = Array.from(other.getElementsByTagName("svg"))[1];
    expect(placed.getAttribute("viewBox")).toBe("0 0 300 200");
  });

  it("escapes hostile names everywhere it writes text, and drops characters XML cannot hold", () => {
    const hostile = `"><script>alert(1)</script><x a='&amp;'>\u0001\u001b`;
    const svg = composeFigure(
      figure({
        title: `Index ${hostile}`,
        units: `per ${hostile}`,
        legend: [{ kind: "swatch", label: hostile, colour: `red"/><script>x</script>` }],
        sourceLine: figureSourceLine({ ...run, panelName: hostile }),
        cautions: [hostile],
      }),
    );
    const doc = parse(svg);
    expect(doc.getElementsByTagName("script")).toHaveLength(0);
    expect(doc.getElementsByTagName("x")).toHaveLength(0);
    const clean = `"><script>alert(1)</script><x a='&amp;'>`;
    expect(doc.getElementsByTagName("title")[0].textContent).toBe(`Index ${clean}`);
    expect(texts(doc, "legend-item")).toEqual([clean]);
    expect(texts(doc, "figure-source").join(" ")).toContain(clean.slice(0, 10));
    expect(svg).not.toContain("\u0001");
  });

  it("wraps long titles and cautions onto several lines within the figure's width", () => {
    const long = "Moran's I of a very long indicator name ".repeat(8).trim();
    const doc = parse(composeFigure(figure({ title: long })));
    const lines = Array.from(doc.getElementsByTagName("g")).find((g) => g.getAttribute("class") === "figure-title")?.getElementsByTagName("text");
    expect(lines?.length).toBeGreaterThan(1);
    expect(Array.from(lines ?? []).map((t) => t.textContent).join(" ")).toBe(long);
  });

  it("refuses a body that is not an <svg> element", () => {
    expect(() => composeFigure(figure({ body: { svg: "<g/>", width: 10, height: 10 } }))).toThrow(/<svg> element/);
  });

  it("takes ECharts' SVG renderer output as the body, and the whole still parses", () => {
    const body = echartsFigureBody(
      {
        legend: { data: ["Moran's I"] },
        xAxis: { type: "category", data: ["2008", "2009", "<b>2010</b>"], name: "Period (year)" },
        yAxis: { type: "value", name: "Moran's I (unitless)" },
        series: [{ name: "Moran's I", type: "line", data: [0.21, 0.35, 0.4] }],
      },
      800,
      340,
    );
    expect(body.svg).toMatch(/^<svg/);
    const doc = parse(composeFigure(figure({ body })));
    const all = Array.from(doc.getElementsByTagName("text")).map((t) => t.textContent ?? "");
    expect(all).toEqual(expect.arrayContaining(["Period (year)", "Moran's I (unitless)", "<b>2010</b>"]));
  });
});

describe("figureSourceLine", () => {
  it("names the panel version, the run and its weights, and what the run did besides", () => {
    expect(figureSourceLine(run)).toBe("Source: Veldmark regional panel v2 · Run 3 (id 12) · weights queen, row-standardised · 999 permutations · Tessera");
    expect(
      figureSourceLine(
        { ...run, params: { weights: "knn:6", transform: "binary", permutations: 9999, empiricalBayes: [{ indicator: "births" }], controlFor: ["port_access"] } },
        { periods: ["2013", "2020"], date: "2026-12-05" },
      ),
    ).toBe(
      "Source: Veldmark regional panel v2 · Run 3 (id 12) · weights 6 nearest, binary · 9,999 permutations · EB-standardised · controls for port_access · periods 2013, 2020 · exported 2026-12-05 · Tessera",
    );
  });
});

describe("crosswalkSourceLine", () => {
  it("names the crosswalk, how it was made and both boundary versions", () => {
    const from = { setName: "Veldmark districts", version: 1 };
    const to = { setName: "Veldmark districts 2019", version: 1 };
    expect(crosswalkSourceLine({ id: 4, origin: "derived", fileName: null, from, to })).toBe(
      "Source: crosswalk 4 (derived from the overlap of areas) from Veldmark districts v1 to Veldmark districts 2019 v1 · Tessera",
    );
    expect(crosswalkSourceLine({ id: 5, origin: "uploaded", fileName: "shares.csv", from, to }, { date: "2026-12-05" })).toBe(
      "Source: crosswalk 5 (uploaded as shares.csv) from Veldmark districts v1 to Veldmark districts 2019 v1 · exported 2026-12-05 · Tessera",
    );
  });
});

describe("figureCautions", () => {
  it("gives each figure the cautions that apply to it", () => {
    expect(figureCautionKeys("timeline", { regions: 240 })).toEqual(["causation", "maup", "multiple"]);
    expect(figureCautionKeys("timeline", { regions: 12, covariates: true, harmonised: true })).toEqual(["causation", "maup", "multiple", "small-n", "ols-assumptions", "areal-weighting"]);
    expect(figureCautionKeys("choropleth")).toEqual(["maup"]);
    expect(figureCautionKeys("rate-map")).toEqual(["maup", "small-rates"]);
    expect(figureCautionKeys("cluster-map", { rate: true })).toEqual(["causation", "maup", "multiple", "small-rates"]);
    expect(figureCautionKeys("reform-map")).toEqual(["areal-weighting"]);
    // An uploaded (say population-weighted) crosswalk does not rest on areal weighting.
    expect(figureCautionKeys("reform-map", { harmonised: false })).toEqual([]);
  });

  it("uses the texts of the cautions box", () => {
    expect(figureCautions("rate-map")).toEqual([`${CAUTIONS.maup.title}. ${CAUTIONS.maup.body}`, `${CAUTIONS["small-rates"].title}. ${CAUTIONS["small-rates"].body}`]);
  });
});

describe("figureFileName", () => {
  it("names run id, indicator, periods and figure in safe ASCII", () => {
    expect(figureFileName({ runId: 12, indicator: "unemployment_rate", periods: ["2013"], figure: "cluster-map", extension: "svg" })).toBe(
      "tessera-run-12-unemployment-rate-2013-cluster-map.svg",
    );
    expect(figureFileName({ runId: 12, indicator: "Émissions CO₂ (t/hab)", figure: "timeline", extension: "png" })).toBe("tessera-run-12-emissions-co2-t-hab-timeline.png");
  });

  it("never lets a hostile name make a path, a hidden file or a long name", () => {
    for (const indicator of ["../../etc/passwd", "..\\..\\boot.ini", ".hidden", "a\u0000b", "名前", "<script>", "x".repeat(500), "CON"]) {
      const name = figureFileName({ runId: 7, indicator, periods: ["2020/../../x"], figure: "scatter", extension: "svg" });
      expect(name).toMatch(/^tessera-run-7-[a-z0-9-]+\.svg$/);
      expect(name).not.toMatch(/--|\.\./);
      expect(name.length).toBeLessThanOrEqual(120);
    }
    expect(fileNamePart("---")).toBe("");
    // A figure of no run (the reform map) names what it shows instead.
    expect(figureFileName({ runId: null, indicator: "crosswalk 4", figure: "reform-map", extension: "png" })).toBe("tessera-crosswalk-4-reform-map.png");
  });
});

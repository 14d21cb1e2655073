import fs from "node:fs";
import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { DOMParser, type Document as XmlDocument } from "@xmldom/xmldom";
import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { CAUTIONS } from "@/lib/runs/cautions";
import { CLUSTER_CLASS_NAMES } from "@/lib/runs/cluster-classes";
import { GI_STAR_CLASS_NAMES, GI_STAR_CLASS_ORDER, LOCAL_MAP_VIEW_NAMES } from "@/lib/runs/gi-star-classes";
import { figureSourceLine, figureSize } from "@/lib/runs/figures";
import type { Timeline } from "@/lib/runs/queries";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { demoRun } from "@/tests/helpers/demo-run";

// Downloadable figures (docs/exports.md, "Figures"): on the demo run, the timeline's chart of
// Moran's I and a cluster map download as SVG (title, legend, source line, cautions, the chart or
// map itself) and as PNG (twice the SVG's size), and so does the reform map of the demo's derived
// crosswalk; both screens print as a report without the navigation and controls.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
const steward = demo.accounts.find((a) => a.role === "steward");
if (!economist || !steward) throw new Error("demo-accounts.json has no economist or no steward");
const INDICATOR = "unemployment_rate";
const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);

let session: BrowserSession;
let runId: number;
let timeline: Timeline;

beforeAll(async () => {
  testServices();
  ({ id: runId } = await demoRun(slug));
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
  await signIn(session.page, economist.email, economist.password);
  const answer = await session.page.request.get(`/api/w/${slug}/timeline?indicator=${INDICATOR}&run=${runId}`);
  expect(answer.status()).toBe(200);
  timeline = (await answer.json()) as Timeline;
});

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(600_000);

/** Clicks a download button and returns the file's name and bytes. */
async function download(page: Page, testId: string): Promise<{ name: string; bytes: Buffer }> {
  const [file] = await Promise.all([page.waitForEvent("download"), page.getByTestId(testId).click()]);
  const where = await file.path();
  return { name: file.suggestedFilename(), bytes: fs.readFileSync(where) };
}

function parse(svg: string): XmlDocument {
  const problems: string[] = [];
  const doc = new DOMParser({ onError: (level, message) => void (level !== "warning" && problems.push(`${level}: ${message}`)) }).parseFromString(svg, "image/svg+xml");
  expect(problems).toEqual([]);
  return doc;
}

function groupText(doc: XmlDocument, className: string): string[] {
  return Array.from(doc.getElementsByTagName("g"))
    .filter((g) => g.getAttribute("class") === className)
    .map((g) => Array.from(g.getElementsByTagName("text")).map((t) => t.textContent ?? "").join(" "));
}

/** The PNG's signature, its pixel size (IHDR) and that it is no blank page. */
function checkPng(bytes: Buffer, svgSize: { width: number; height: number }) {
  expect(bytes.subarray(0, 8).equals(PNG_SIGNATURE)).toBe(true);
  expect(bytes.subarray(12, 16).toString("ascii")).toBe("IHDR");
  expect(bytes.readUInt32BE(16)).toBe(svgSize.width * 2);
  expect(bytes.readUInt32BE(20)).toBe(svgSize.height * 2);
  expect(bytes.length).toBeGreaterThan(30_000);
}

it("the timeline's chart of Moran's I downloads as an SVG with its title, legend, source line and cautions, and as a PNG", async () => {
  const { page } = session;
  await page.goto(`/w/${slug}/timeline?indicator=${INDICATOR}&run=${runId}`);
  await page.locator('[data-testid="timeline-moran"] svg').first().waitFor();

  const svg = await download(page, "figure-timeline-moran-svg");
  expect(svg.name).toBe(`tessera-run-${runId}-unemployment-rate-timeline.svg`);
  const text = svg.bytes.toString("utf8");
  const doc = parse(text);
  const title = `Moran's I of ${timeline.indicator.label.toLowerCase()} per period`;
  expect(doc.getElementsByTagName("title")[0].textContent).toBe(title);
  expect(groupText(doc, "figure-title").join(" ")).toBe(title);
  expect(groupText(doc, "legend-item")).toEqual(expect.arrayContaining(["Moran's I", "E[I]", "95 % band under the null", "Significant after correction"]));
  const source = groupText(doc, "figure-source").join(" ");
  expect(source.startsWith(figureSourceLine(timeline.run).replace(" · Tessera", ""))).toBe(true);
  expect(source).toContain(`Run ${timeline.run.number} (id ${runId})`);
  expect(groupText(doc, "figure-caution")[0]).toBe(`Caution: ${CAUTIONS.causation.title}. ${CAUTIONS.causation.body}`);
  // The chart itself: ECharts' SVG with the axes' names and every period.
  const chartTexts = Array.from(doc.getElementsByTagName("text")).map((t) => t.textContent ?? "");
  expect(chartTexts).toEqual(expect.arrayContaining(["Moran's I (unitless)", "Period (year)", timeline.points[0].period]));

  const png = await download(page, "figure-timeline-moran-png");
  expect(png.name).toBe(`tessera-run-${runId}-unemployment-rate-timeline.png`);
  checkPng(png.bytes, figureSize(text));

  // Printed: no navigation or controls, the source line and the cautions kept.
  await page.emulateMedia({ media: "print" });
  expect(await page.locator("header").first().isVisible()).toBe(false);
  expect(await page.locator("#tl-indicator").isVisible()).toBe(false);
  expect(await page.getByTestId("figure-timeline-moran").isVisible()).toBe(false);
  expect(await page.getByTestId("timeline-print-source").innerText()).toContain(`Run ${timeline.run.number} (id ${runId})`);
  expect(await page.locator("#cautions-heading").isVisible()).toBe(true);
  expect(await page.getByRole("heading", { name: title }).isVisible()).toBe(true);
  await screenshot(page, "figures-01-timeline-print");
  await page.emulateMedia({ media: "screen" });
});

it("a cluster map downloads as an SVG with the map's regions, its classes and the source line naming the period, and as a PNG", async () => {
  const { page } = session;
  const [a, b] = [timeline.points[5].period, timeline.points[12].period];
  await page.goto(`/w/${slug}/map?indicator=${INDICATOR}&run=${runId}&a=${a}&b=${b}`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
  const regions = await page.locator('[data-testid="cluster-map-a"] path[data-region]').count();

  const svg = await download(page, "figure-cluster-map-a-svg");
  expect(svg.name).toBe(`tessera-run-${runId}-unemployment-rate-${a}-cluster-map.svg`);
  const text = svg.bytes.toString("utf8");
  const doc = parse(text);
  expect(doc.getElementsByTagName("title")[0].textContent).toBe(`Local clusters of ${timeline.indicator.label.toLowerCase()}, ${a}`);
  const paths = Array.from(doc.getElementsByTagName("path")).filter((p) => p.getAttribute("data-region"));
  expect(paths).toHaveLength(regions);
  const legend = groupText(doc, "legend-item");
  expect(legend).toHaveLength(6);
  expect(legend[0]).toMatch(new RegExp(`^${CLUSTER_CLASS_NAMES.HH} \\(\\d+\\)$`));
  const source = groupText(doc, "figure-source").join(" ");
  expect(source).toContain(`Run ${timeline.run.number} (id ${runId})`);
  expect(source).toContain(`period ${a}`);
  expect(groupText(doc, "figure-caution").length).toBeGreaterThanOrEqual(3);

  const png = await download(page, "figure-cluster-map-a-png");
  expect(png.name).toBe(`tessera-run-${runId}-unemployment-rate-${a}-cluster-map.png`);
  checkPng(png.bytes, figureSize(text));

  // The scatter plot's figure is an ECharts body too.
  const scatter = await download(page, "figure-scatter-a-svg");
  expect(scatter.name).toBe(`tessera-run-${runId}-unemployment-rate-${a}-scatter.svg`);
  parse(scatter.bytes.toString("utf8"));

  // And the Gi* map of the same period, behind the switch.
  await page.getByRole("radiogroup", { name: "Local map" }).getByRole("radio", { name: LOCAL_MAP_VIEW_NAMES["gi-star"] }).click();
  await page.locator('[data-testid="gi-star-map-a"] path[data-region]').first().waitFor();
  const gi = await download(page, "figure-gi-star-map-a-svg");
  expect(gi.name).toBe(`tessera-run-${runId}-unemployment-rate-${a}-gi-star-map.svg`);
  const giDoc = parse(gi.bytes.toString("utf8"));
  expect(groupText(giDoc, "legend-item").map((t) => t.replace(/ \(\d+\)$/, ""))).toEqual(GI_STAR_CLASS_ORDER.map((k) => GI_STAR_CLASS_NAMES[k]));
  await page.getByRole("radiogroup", { name: "Local map" }).getByRole("radio", { name: LOCAL_MAP_VIEW_NAMES.clusters }).click();
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();

  await page.emulateMedia({ media: "print" });
  expect(await page.locator("header").first().isVisible()).toBe(false);
  expect(await page.locator("#map-a").isVisible()).toBe(false);
  expect(await page.getByTestId("figure-cluster-map-a").isVisible()).toBe(false);
  expect(await page.getByTestId("map-print-source").innerText()).toContain(`periods ${a}, ${b}`);
  expect(await page.locator("#cautions-heading").isVisible()).toBe(true);
  expect(await page.getByTestId("cluster-map-a").isVisible()).toBe(true);
  await screenshot(page, "figures-02-map-print");
  await page.emulateMedia({ media: "screen" });
});

it("the reform map of the demo's derived crosswalk downloads as an SVG naming both boundary versions, with the areal-weighting caution", async () => {
  const [crosswalk] = await db().query<{ id: number }>(
    `SELECT c.id FROM crosswalks c JOIN workspaces w ON w.id = c.workspace_id
      WHERE w.slug = $1 AND c.origin = 'derived' AND c.status = 'ready' ORDER BY c.id LIMIT 1`,
    { bind: [slug], type: QueryTypes.SELECT },
  );
  expect(crosswalk).toBeDefined();
  // Crosswalks are the stewards' (data.view-unpublished).
  const own = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  try {
    const { page } = own;
    page.setDefaultTimeout(120_000);
    await signIn(page, steward.email, steward.password);
    await page.goto(`/w/${slug}/intake/reforms/${crosswalk.id}`);
    await page.locator('[data-testid="reform-map"] path').first().waitFor();
    const svg = await download(page, "figure-reform-map-svg");
    expect(svg.name).toBe(`tessera-crosswalk-${crosswalk.id}-reform-map.svg`);
    const doc = parse(svg.bytes.toString("utf8"));
    expect(doc.getElementsByTagName("title")[0].textContent).toMatch(/^Boundary reform: .+ v\d+ to .+ v\d+$/);
    expect(groupText(doc, "figure-source").join(" ")).toMatch(new RegExp(`^Source: crosswalk ${crosswalk.id} \\(derived from the overlap of areas\\)`));
    expect(groupText(doc, "figure-caution")).toEqual([`Caution: ${CAUTIONS["areal-weighting"].title}. ${CAUTIONS["areal-weighting"].body}`]);
    expect(doc.getElementsByTagName("path").length).toBeGreaterThan(200);
  } finally {
    await own.close();
  }
});

import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { GI_STAR_CLASS_COLOURS, GI_STAR_CLASS_NAMES, LOCAL_MAP_VIEW_NAMES } from "@/lib/runs/gi-star-classes";
import { CORRECTION_LABELS, type ResolvedRunParams } from "@/lib/runs/schemas";
import type { GiStarFields } from "@/lib/runs/types";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { demoRun } from "@/tests/helpers/demo-run";

// Hot and cold spots on the map (issue 15, item 3): on the demo run (scripts/demo/run-demo-analysis.ts,
// local results on), the map's switch shows the local Gi* map of unemployment with hot and cold
// regions as stored, its legend, its caption (what Gi* is, which correction), and the region detail.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");
const INDICATOR = "unemployment_rate";

let session: BrowserSession;
let runId: number;
let params: ResolvedRunParams;
/** Unemployment periods of the demo run, in order, with their stored Gi*. */
let stored: { period: string; gi: GiStarFields }[];


beforeAll(async () => {
  testServices();
  ({ id: runId, params } = await demoRun(slug));
  expect(params.local).toBe(true);
  const rows = await db().query<{ period_key: string; gi_star: GiStarFields | null }>(
    "SELECT period_key, gi_star FROM run_results WHERE run_id = $1 AND indicator_code = $2 ORDER BY period_index",
    { bind: [runId, INDICATOR], type: QueryTypes.SELECT },
  );
  stored = rows.flatMap((r) => (r.gi_star ? [{ period: r.period_key, gi: r.gi_star }] : []));
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(600_000);

it("the demo run's map shows unemployment's hot and cold spots (Gi*) beside the local Moran clusters", async () => {
  const { page } = session;
  // The demo's unemployment clusters: some period has both hot and cold spots after the correction.
  const both = stored.filter((s) => s.gi.counts.hot > 0 && s.gi.counts.cold > 0);
  expect(both.length).toBeGreaterThan(0);
  const a = both[0];
  const b = stored[stored.length - 1];
  expect(b.period).not.toBe(a.period);

  await signIn(page, economist.email, economist.password);
  await page.goto(`/w/${slug}/map?indicator=${INDICATOR}&run=${runId}&a=${a.period}&b=${b.period}`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();

  // The switch: clusters first, then hot and cold spots.
  const view = page.getByRole("radiogroup", { name: "Local map" });
  expect(await view.getByRole("radio", { name: LOCAL_MAP_VIEW_NAMES.clusters }).getAttribute("aria-checked")).toBe("true");
  await view.getByRole("radio", { name: LOCAL_MAP_VIEW_NAMES["gi-star"] }).click();
  await page.locator('[data-testid="gi-star-map-a"] path[data-region]').first().waitFor();
  expect(await page.locator('[data-testid="cluster-map-a"]').count()).toBe(0);

  for (const [side, s] of [
    ["a", a],
    ["b", b],
  ] as const) {
    const map = page.locator(`[data-testid="gi-star-map-${side}"]`);
    // Every region carries its stored class (not colour alone), and the class's colour.
    const shown = await map.locator("path[data-region]").evaluateAll((paths) => paths.map((p) => [p.getAttribute("data-region"), p.getAttribute("data-class"), p.getAttribute("fill")]));
    const classOf = new Map(s.gi.ids.map((id, i) => [id, s.gi.classes[i]]));
    for (const [id, cls, fill] of shown) {
      const expected = classOf.get(String(id)) ?? "no-value";
      expect([id, cls]).toEqual([id, expected]);
      if (expected === "hot" || expected === "cold") expect([id, fill]).toEqual([id, GI_STAR_CLASS_COLOURS[expected]]);
    }
    expect(shown.filter(([, cls]) => cls === "hot")).toHaveLength(s.gi.counts.hot);
    expect(shown.filter(([, cls]) => cls === "cold")).toHaveLength(s.gi.counts.cold);
    // The legend names and counts the classes.
    const legend = page.getByTestId(`gi-star-legend-${side}`);
    const entry = async (cls: string) => ((await legend.locator(`li[data-class="${cls}"]`).textContent()) ?? "").replace(/\s+/g, " ").trim();
    expect(await entry("hot")).toBe(`${GI_STAR_CLASS_NAMES.hot} ${s.gi.counts.hot}`);
    expect(await entry("cold")).toBe(`${GI_STAR_CLASS_NAMES.cold} ${s.gi.counts.cold}`);
    // The caption says what Gi* is and which correction decided the classes.
    const caption = await page.getByTestId(`gi-star-caption-${side}`).innerText();
    expect(caption).toContain("Local Getis–Ord Gi*");
    expect(caption).toContain(`with ${CORRECTION_LABELS[params.correction]} correction across the ${s.gi.ids.length - s.gi.counts["no-neighbours"]} regions with neighbours, at α = ${params.alpha}`);
  }
  expect(a.gi.counts.hot).toBeGreaterThan(0);

  // Hovering a hot region shows its Gi* class and z in the region detail.
  const hotIndex = a.gi.classes.indexOf("hot");
  const hotId = a.gi.ids[hotIndex];
  await page.locator(`[data-testid="gi-star-map-a"] path[data-region="${hotId}"]`).hover();
  const classRow = page.getByTestId("region-detail-gi-star-class");
  await classRow.waitFor();
  expect((await classRow.locator("td").allInnerTexts())[1]).toBe(GI_STAR_CLASS_NAMES.hot);
  const z = a.gi.z[hotIndex] as number;
  expect((await page.getByTestId("region-detail-gi-star-z").locator("td").allInnerTexts())[1]).toBe(z.toFixed(3));
  expect(z).toBeGreaterThan(0);
  await screenshot(page, "hotspots-01-unemployment");

  // And back to the clusters.
  await view.getByRole("radio", { name: LOCAL_MAP_VIEW_NAMES.clusters }).click();
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
});

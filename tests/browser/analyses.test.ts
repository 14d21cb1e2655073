import type { Page } from "playwright-core";
import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { chiSquareIndependence } from "@/lib/spatial";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";

/** The demo panel's name, as DEMO_PANEL in scripts/demo/seed-demo-data.ts (a script, so not imported). */
const DEMO_PANEL = "Veldmark district indicators 2008–2024";
/** How the run form's option of the panel analysed here begins. */
let panelPrefix = `${DEMO_PANEL} — `;

// The economist's day (issue 5 "done when"): start a run on the demo panel,
// watch it finish, filter the catalogue to significant clustering, open the
// unemployment timeline, and compare 2013 with 2016 on the map.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");

let session: BrowserSession;


beforeAll(async () => {
  testServices();
  // The demo seed publishes the Veldmark panel; load it here when this bring-up did not.
  const [ws] = await db().query<{ id: number }>("SELECT id FROM workspaces WHERE slug = $1", { bind: [slug], type: QueryTypes.SELECT });
  if (!ws) throw new Error(`The demo workspace "${slug}" is missing: the demo seeder has not run.`);
  const published = await db().query(
    "SELECT pv.id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE p.workspace_id = $1 AND pv.state = 'published'",
    { bind: [ws.id], type: QueryTypes.SELECT },
  );
  if (published.length === 0) {
    await loadVeldmarkPanel(ws.id);
    panelPrefix = "Veldmark indicators ";
  }
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  // Generous: under `next dev` each screen compiles on its first visit.
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(600_000);

/** Pearson's chi-square test of the transition table on the screen, recomputed from its cells. */
async function shownTransitionTest(page: Page) {
  const counts = await page.evaluate(() =>
    [...document.querySelectorAll('[data-testid="transition-table"] tbody tr')].map((tr) => [...tr.querySelectorAll("td")].map((td) => Number(td.textContent))),
  );
  expect(counts.flat().reduce((a, b) => a + b, 0)).toBe(236); // every Veldmark region, in both periods
  const test = chiSquareIndependence(counts);
  if (test === null) throw new Error(`The transition table has fewer than two occupied classes on a side: ${JSON.stringify(counts)}`);
  return test;
}

it("an economist runs the demo panel, filters the catalogue, opens the unemployment timeline and compares 2013 with 2016", async () => {
  const { page } = session;
  await signIn(page, economist.email, economist.password);

  // Start a run: two indicators keep the test short; the seed is fixed so the numbers repeat.
  await page.goto(`/w/${slug}/runs`);
  const form = page.getByRole("form", { name: "Start a run" });
  await form.waitFor();
  // Other browser tests publish panels of their own (some also named after Veldmark) and the
  // newest is preselected, so pick the demo panel by its full name.
  const panelSelect = page.getByLabel("Panel version");
  const panelLabels = await panelSelect.locator("option").allInnerTexts();
  const veldmark = panelLabels.find((label) => label.startsWith(panelPrefix));
  if (!veldmark) throw new Error(`No Veldmark panel among the published versions: ${panelLabels.join("; ")}`);
  await panelSelect.selectOption({ label: veldmark });
  // The indicators to analyse (the "Control for" list below offers the same names as covariates).
  const chosen = form.getByRole("group", { name: "Indicators" });
  await chosen.getByRole("checkbox", { name: "Unemployment rate", exact: true }).waitFor();
  for (const label of await chosen.locator("label").allInnerTexts()) {
    const keep = /^(Unemployment rate|Broadband coverage)$/.test(label.trim());
    const box = chosen.getByRole("checkbox", { name: label.trim(), exact: true });
    if ((await box.isChecked()) !== keep) await box.click();
  }
  await page.getByLabel("Seed").fill("20260101");
  await screenshot(page, "analyses-01-start-run");
  await page.getByRole("button", { name: "Start run" }).click();
  await page.getByText(/Run \d+ is queued/).waitFor();
  // The notice names the run by its number in this workspace; the queue and the URLs use its id.
  const started = page.getByTestId("started-run");
  const runId = Number(await started.getAttribute("data-run-id"));
  expect(runId).toBeGreaterThan(0);
  expect(await started.innerText()).toMatch(/^Run \d+$/);
  await page.locator(`[data-testid="run-${runId}"][data-state="completed"]`).waitFor({ timeout: 110_000 });
  await screenshot(page, "analyses-02-run-completed");

  // Catalogue of that run, filtered to significant clustering; the filter lives in the URL.
  await page.goto(`/w/${slug}/catalogue?run=${runId}`);
  await page.locator(".ag-row").first().waitFor();
  const filtered = page.waitForResponse((r) => r.url().includes("/catalogue?") && r.url().includes("class=clustering"));
  await page.getByRole("button", { name: /^Clustering/ }).click();
  await page.waitForURL(/class=clustering/);
  await filtered;
  await page.waitForFunction(() => /^\d+ indicator-period/.test(document.querySelector('[data-testid="catalogue-count"]')?.textContent ?? ""));
  await screenshot(page, "analyses-03-catalogue-clustering");
  const classes = await page.locator('.ag-row [role="gridcell"][col-id="significance"]').allInnerTexts();
  expect(classes.length).toBeGreaterThan(0);
  expect(new Set(classes.map((c) => c.trim()))).toEqual(new Set(["Clustering"]));

  // Narrow to unemployment by text (kept in the URL too), then open its timeline from the grid.
  await page.getByLabel("Indicator").fill("unemployment");
  await page.getByLabel("Indicator").press("Enter");
  await page.waitForURL(/q=unemployment/);
  await page.locator(".ag-row a", { hasText: /^Unemployment rate$/ }).first().click();
  await page.waitForURL(/\/timeline\?indicator=unemployment_rate/);
  await page.locator('[data-testid="timeline-moran"] svg').waitFor();
  await page.locator('[data-testid="timeline-robustness"] svg').waitFor({ timeout: 60_000 });
  await screenshot(page, "analyses-04-timeline-unemployment");

  // The map comparing 2013 with 2016: unemployment has High-High and Low-Low clusters in both
  // (2012 has none, so a table from 2012 has one occupied row and no test to show).
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${runId}&a=2013&b=2016`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
  await page.locator('[data-testid="transition-table"]').waitFor();
  // Under the table: Pearson's chi-square test of the table shown, with its cautions.
  const test = await shownTransitionTest(page);
  expect(test.rows).toBeGreaterThanOrEqual(3); // High-High, Low-Low and not significant, in both periods
  expect(test.columns).toBeGreaterThanOrEqual(3);
  expect(test.p).toBeLessThan(0.001);
  // Several cells of this table expect fewer than 5 regions, so the rough-approximation caution shows too.
  expect(test.expectedBelow5).toBeGreaterThan(test.cells / 5);
  expect(await page.getByTestId("transition-independence").innerText()).toBe(
    `Is the 2016 class independent of the 2013 class? Pearson χ² = ${test.chiSquare.toFixed(2)}, df ${test.degreesOfFreedom}, p = < 0.001. ` +
      "Neighbouring regions are not independent observations, so this p is optimistic. " +
      `${test.expectedBelow5} of ${test.cells} cells expect fewer than 5 regions: the χ² approximation is rough here.`,
  );
  const hh2016 = await page.locator('[data-testid="cluster-map-b"] path[fill="#9a3412"]').count();
  expect(hh2016).toBeGreaterThan(0);
  await page.locator('[data-testid="cluster-map-b"] path[fill="#9a3412"]').first().hover();
  await page.locator('[data-testid="region-detail"]').waitFor();
  await screenshot(page, "analyses-05-map-2013-2016");

  // Broadband 2008 → 2009: clusters in both years and every cell expects at least 5 regions,
  // so the test shows with the neighbour caution and without the rough-approximation one.
  await page.goto(`/w/${slug}/map?indicator=broadband_coverage&run=${runId}&a=2008&b=2009`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
  await page.locator('[data-testid="transition-table"]').waitFor();
  const broadband = await shownTransitionTest(page);
  expect(broadband.rows).toBeGreaterThanOrEqual(3);
  expect(broadband.expectedBelow5).toBe(0);
  expect(await page.getByTestId("transition-independence").innerText()).toBe(
    `Is the 2009 class independent of the 2008 class? Pearson χ² = ${broadband.chiSquare.toFixed(2)}, df ${broadband.degreesOfFreedom}, p = < 0.001. ` +
      "Neighbouring regions are not independent observations, so this p is optimistic.",
  );

  await page.goto(`/w/${slug}/compare?indicator=unemployment_rate&run=${runId}&a=2012&b=2016`);
  await page.locator('[data-testid="compare-change-i"]').waitFor();
  await screenshot(page, "analyses-06-compare-2012-2016");

  await page.goto(`/w/${slug}/desk`);
  await page.locator('[data-testid="desk-analyses"]').waitFor();
  await screenshot(page, "analyses-07-desk");
});

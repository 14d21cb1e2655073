import type { Page } from "playwright-core";
import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeConnections } from "@/tests/helpers/teardown";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";

/** The demo panel's name, as DEMO_PANEL in scripts/demo/seed-demo-data.ts (a script, so not imported). */
const DEMO_PANEL = "Veldmark district indicators 2008–2024";
/** How the run form's option of the panel analysed here begins. */
let panelPrefix = `${DEMO_PANEL} — `;

// The economist's day (issue 5 "done when"): start a run on the demo panel,
// watch it finish, filter the catalogue to significant clustering, open the
// unemployment timeline, and compare 2012 with 2016 on the map.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");

let session: BrowserSession;

async function signIn(page: Page, email: string, password: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"), { waitUntil: "commit" });
}

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

it("an economist runs the demo panel, filters the catalogue, opens the unemployment timeline and compares 2012 with 2016", async () => {
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
  await form.getByRole("checkbox", { name: "Unemployment rate", exact: true }).waitFor();
  for (const label of await form.locator("fieldset label").allInnerTexts()) {
    const keep = /^(Unemployment rate|Broadband coverage)$/.test(label.trim());
    const box = form.getByRole("checkbox", { name: label.trim(), exact: true });
    if ((await box.isChecked()) !== keep) await box.click();
  }
  await page.getByLabel("Seed").fill("20260101");
  await screenshot(page, "analyses-01-start-run");
  await page.getByRole("button", { name: "Start run" }).click();
  await page.getByText(/Run \d+ is queued/).waitFor();
  const runId = Number((await page.getByText(/Run \d+ is queued/).innerText()).match(/Run (\d+)/)?.[1]);
  expect(runId).toBeGreaterThan(0);
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

  // The map comparing 2012 with 2016.
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${runId}&a=2012&b=2016`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
  await page.locator('[data-testid="transition-table"]').waitFor();
  // Under the table: the chi-square test with its caution when both periods
  // have regions in two or more classes, otherwise a sentence saying why not.
  const occupied = await page.evaluate(() => {
    const rows = [...document.querySelectorAll('[data-testid="transition-table"] tbody tr')].map((tr) => [...tr.querySelectorAll("td")].map((td) => Number(td.textContent)));
    const rowsUsed = rows.filter((r) => r.some((v) => v > 0)).length;
    const columnsUsed = (rows[0] ?? []).filter((_, j) => rows.some((r) => r[j] > 0)).length;
    return { rowsUsed, columnsUsed };
  });
  const independence = await page.getByTestId("transition-independence").innerText();
  if (occupied.rowsUsed >= 2 && occupied.columnsUsed >= 2) {
    expect(independence).toMatch(/Pearson χ² = [\d.]+, df \d+, p = /);
    expect(independence).toContain("Neighbouring regions are not independent observations");
  } else {
    expect(independence).toContain("No χ² test of independence: it needs regions in at least two classes in both 2012 and 2016.");
  }
  const hh2016 = await page.locator('[data-testid="cluster-map-b"] path[fill="#9a3412"]').count();
  expect(hh2016).toBeGreaterThan(0);
  await page.locator('[data-testid="cluster-map-b"] path[fill="#9a3412"]').first().hover();
  await page.locator('[data-testid="region-detail"]').waitFor();
  await screenshot(page, "analyses-05-map-2012-2016");

  await page.goto(`/w/${slug}/compare?indicator=unemployment_rate&run=${runId}&a=2012&b=2016`);
  await page.locator('[data-testid="compare-change-i"]').waitFor();
  await screenshot(page, "analyses-06-compare-2012-2016");

  await page.goto(`/w/${slug}/desk`);
  await page.locator('[data-testid="desk-analyses"]').waitFor();
  await screenshot(page, "analyses-07-desk");
});

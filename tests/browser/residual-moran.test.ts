import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import type { RegressionFields } from "@/lib/runs/types";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { demoRun } from "@/tests/helpers/demo-run";

// Clustering that remains after the covariates, on the demo: the demo run
// controls for Veldmark's invented heavy-industry share, so the unemployment
// timeline draws Moran's I of the residuals beside Moran's I, and the period
// view shows the regression and the residual diagnostics with their cautions.
// What the screens show is compared with what the run stored.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");

let session: BrowserSession;
let demoRunId: number;
let controlFor: string[];
let stored: { period_key: string; i: number | null; regression: RegressionFields | null }[];
let lagRows: number;

beforeAll(async () => {
  testServices();
  const run = await demoRun(slug);
  demoRunId = run.id;
  controlFor = run.params.controlFor ?? [];
  stored = await db().query(
    "SELECT period_key, i, regression FROM run_results WHERE run_id = $1 AND indicator_code = 'unemployment_rate' ORDER BY period_index",
    { bind: [demoRunId], type: QueryTypes.SELECT },
  );
  const [lag] = await db().query<{ count: string }>("SELECT count(*) AS count FROM run_results WHERE run_id = $1 AND model_suggestion = 'lag'", {
    bind: [demoRunId],
    type: QueryTypes.SELECT,
  });
  lagRows = Number(lag.count);
  session = await openBrowser({ viewport: { width: 1440, height: 1100 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeConnections();
});

jest.setTimeout(600_000);

const shown = (v: number | null | undefined) => (v === null || v === undefined ? "—" : v.toFixed(3).replace("-", "−"));

it("the demo run controls for heavy industry, and after the 2013 closure the residual I is visibly below I", () => {
  expect(controlFor).toEqual(["heavy_industry_share"]);
  const y2014 = stored.find((r) => r.period_key === "2014");
  expect(y2014?.regression?.moran?.I).not.toBeNull();
  expect((y2014?.i as number) - (y2014?.regression?.moran?.I as number)).toBeGreaterThan(0.1);
});

it("the timeline shows the raw and the residual Moran's I per period, with a legend entry and a tooltip for each", async () => {
  const { page } = session;
  await signIn(page, economist.email, economist.password);
  await page.goto(`/w/${slug}/timeline?indicator=unemployment_rate&run=${demoRunId}`);
  const chart = page.locator('[data-testid="timeline-moran"]');
  await chart.locator("svg").waitFor();
  // The svg renderer writes the legend as text: both series are named.
  const legend = await chart.locator("svg text").allTextContents();
  expect(legend).toEqual(expect.arrayContaining(["Moran's I", "Moran's I of the residuals"]));
  await page.getByTestId("timeline-residual-caption").waitFor();
  expect(await page.getByTestId("timeline-residual-caption").textContent()).toContain("heavy_industry_share");
  // The per-period table gives each residual I as stored.
  for (const r of stored) expect(await page.getByTestId(`residual-i-${r.period_key}`).textContent()).toBe(shown(r.regression?.moran?.I));
  // Hovering a period lists both values in the tooltip.
  const box = await chart.boundingBox();
  if (!box) throw new Error("the timeline chart has no box");
  let tooltip = "";
  for (const fx of [0.35, 0.4, 0.45, 0.5]) {
    await page.mouse.move(box.x + box.width * fx, box.y + box.height * 0.55);
    await page.waitForTimeout(200);
    tooltip = await chart.evaluate((el) => (el as HTMLElement).innerText);
    if (tooltip.includes("Moran's I of the residuals")) break;
  }
  expect(tooltip).toContain("Moran's I of the residuals");
  await screenshot(page, "residual-moran-01-timeline");
});

it("the period view lists the regression table and the diagnostics, with the suggestion in words and the cautions", async () => {
  const { page } = session;
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${demoRunId}&a=2014&b=2020`);
  const table = page.getByTestId("regression-table-a");
  await table.waitFor();
  const y2014 = stored.find((r) => r.period_key === "2014")?.regression as RegressionFields;
  const rows = await table.locator("tbody tr").allInnerTexts();
  expect(rows).toHaveLength(2);
  expect(rows[0]).toContain("Intercept");
  expect(rows[1]).toContain("Heavy industry employment share");
  const headers = await table.locator("thead th").allInnerTexts();
  expect(headers.map((h) => h.trim())).toEqual(["Term", "Estimate", "Standard error", "t", "p"]);
  expect(await page.getByTestId("regression-r2-a").textContent()).toContain(`R² ${(y2014.rSquared as number).toFixed(3)}`);
  expect(await page.getByTestId("residual-i-a").textContent()).toBe(shown(y2014.moran?.I));
  const tests = await page.getByTestId("diagnostics-table-a").locator("tbody tr").allInnerTexts();
  expect(tests).toHaveLength(5);
  expect(tests.map((t) => t.split("\t")[0].trim())).toEqual(["Error dependence", "Lag dependence", "Error, allowing for lag", "Lag, allowing for error", "Either, together"]);
  const suggestion = page.getByTestId("suggestion-a");
  expect(await suggestion.getAttribute("data-suggestion")).toBe(y2014.suggestion);
  expect((await suggestion.textContent())?.length).toBeGreaterThan(40);
  const cautions = await page.getByTestId("regression-cautions-a").textContent();
  for (const title of ["The regression assumes more than it shows", "Covariates that move together", "Few regions per covariate", "A suggestion, not a fitted model"]) {
    expect(cautions).toContain(title);
  }
  await page.getByTestId("regression-b").waitFor();
  await screenshot(page, "residual-moran-02-period");
});

it("the run form offers Control for, the runs list names the demo run's covariates, and the catalogue filters by the suggestion", async () => {
  const { page } = session;
  await page.goto(`/w/${slug}/runs`);
  const form = page.getByRole("form", { name: "Start a run" });
  await form.waitFor();
  // Other tests publish panels of their own; the covariate belongs to the demo panel, so choose it by name.
  const panelSelect = page.getByLabel("Panel version");
  const demoPanel = (await panelSelect.locator("option").allInnerTexts()).find((label) => label.startsWith("Veldmark district indicators 2008–2024 — "));
  if (!demoPanel) throw new Error("The demo panel is not among the published versions");
  await panelSelect.selectOption({ label: demoPanel });
  await page.getByTestId("run-control-for").getByText("Heavy industry employment share").waitFor();
  const choices = await page.getByTestId("run-control-for").locator("label").allInnerTexts();
  expect(choices.map((c) => c.trim())).toContain("Heavy industry employment share");
  expect(await page.getByTestId(`run-${demoRunId}-control-for`).textContent()).toContain("heavy_industry_share");

  await page.goto(`/w/${slug}/catalogue?run=${demoRunId}`);
  const filter = page.getByRole("group", { name: "Suggested model filter" });
  await filter.waitFor();
  await filter.getByRole("button", { name: /^Lag/ }).click();
  await page.waitForURL(/suggestion=lag/);
  await page.waitForFunction((n) => document.querySelector('[data-testid="catalogue-count"]')?.textContent?.startsWith(`${n} indicator-period`), lagRows);
  const shownSuggestions = await page.locator('[data-testid="catalogue-grid"] [col-id="modelSuggestion"][role="gridcell"]').allInnerTexts();
  expect(shownSuggestions.length).toBeGreaterThan(0);
  expect(new Set(shownSuggestions.map((t) => t.trim()))).toEqual(new Set(["spatial lag"]));
  await screenshot(page, "residual-moran-03-catalogue");
});

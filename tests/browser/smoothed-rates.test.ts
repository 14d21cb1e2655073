import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import type { ResolvedRunParams } from "@/lib/runs/schemas";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { demoRun } from "@/tests/helpers/demo-run";

// Smoothed rates on the map: the demo run (scripts/demo/run-demo-analysis.ts) standardises the
// demo's rate, business closures per 1,000 working-age residents, by empirical Bayes, and the map
// of that rate offers raw, global and local empirical-Bayes rates. A western-isle district of a
// few hundred working-age residents (seeders/data/veldmark/README.md) must change between the
// raw and the smoothed layers; its raw rate must be its closures over its population.

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");
const INDICATOR = "business_closures_per_1000";
const EVENTS = "business_closures";
const POPULATION = "working_age_population";
const ISLE = "VM-125";

let session: BrowserSession;
let runId: number;
let params: ResolvedRunParams;

beforeAll(async () => {
  testServices();
  ({ id: runId, params } = await demoRun(slug));
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(600_000);

async function islandCounts(period: string): Promise<{ events: number; population: number }> {
  const rows = await db().query<{ indicator_code: string; value: number | null }>(
    `SELECT indicator_code, value FROM observations WHERE panel_version_id = $1 AND period_key = $2 AND region_code = $3 AND indicator_code IN ($4, $5)`,
    { bind: [params.panelVersionId, period, ISLE, EVENTS, POPULATION], type: QueryTypes.SELECT },
  );
  const value = (code: string) => rows.find((r) => r.indicator_code === code)?.value ?? null;
  const events = value(EVENTS);
  const population = value(POPULATION);
  if (events === null || population === null) throw new Error(`${ISLE} has no closures or population in ${period}`);
  return { events, population };
}

it("the demo run standardises the closures rate, and its map switches between raw, global and local EB rates", async () => {
  expect(params.empiricalBayes).toEqual([{ indicator: INDICATOR, events: EVENTS, population: POPULATION, multiplier: 1000 }]);
  const a = params.periods[0];
  const b = params.periods[params.periods.length - 1];
  const { events, population } = await islandCounts(a);
  // A small base: the raw rate swings on a single closure.
  expect(population).toBeLessThan(1000);

  const { page } = session;
  await signIn(page, economist.email, economist.password);
  await page.goto(`/w/${slug}/map?indicator=${INDICATOR}&run=${runId}&a=${a}&b=${b}`);
  const island = page.locator(`[data-testid="rate-map-a"] path[data-region="${ISLE}"]`);
  await island.waitFor();

  // The run is named as EB-standardised wherever it is picked.
  await expect(page.locator("#map-run option:checked").innerText()).resolves.toMatch(/· EB-standardised( · controls for .+)?$/);

  const layers = page.getByRole("radiogroup", { name: "Rate layer" });
  expect(await layers.getByRole("radio", { name: "Raw rate" }).getAttribute("aria-checked")).toBe("true");
  const valueOf = async () => Number(await island.getAttribute("data-value"));

  const raw = await valueOf();
  expect(raw).toBeCloseTo((1000 * events) / population, 9);
  const title = await island.locator("title").textContent();
  expect(title).toMatch(new RegExp(`\\(${ISLE}\\): raw .+ · global EB .+ · local EB .+`));

  await layers.getByRole("radio", { name: "Global EB rate" }).click();
  await page.getByRole("group", { name: `Global EB rate map, ${a}`, exact: true }).waitFor();
  const global = await valueOf();
  expect(Math.abs(global - raw)).toBeGreaterThan(1e-6);

  await layers.getByRole("radio", { name: "Local EB rate" }).click();
  await page.getByRole("group", { name: `Local EB rate map, ${a}`, exact: true }).waitFor();
  const local = await valueOf();
  expect(Math.abs(local - raw)).toBeGreaterThan(1e-6);
  expect(await layers.getByRole("radio", { name: "Local EB rate" }).getAttribute("aria-checked")).toBe("true");
  await screenshot(page, "smoothed-rates-local");

  await layers.getByRole("radio", { name: "Raw rate" }).click();
  await page.getByRole("group", { name: `Raw rate map, ${a}`, exact: true }).waitFor();
  expect(await valueOf()).toBe(raw);
  // The whole-panel transition tables class the published rates, and say so for a run that standardised them.
  await page.getByText("these tables class the published rates").waitFor();

  // The queue lists which indicators the run standardised.
  await page.goto(`/w/${slug}/runs`);
  await expect(page.getByTestId(`run-${runId}-rates`).innerText()).resolves.toMatch(new RegExp(`EB-standardised \\(${INDICATOR}\\)`));
  await expect(page.locator(`[data-testid="run-${runId}"] [data-testid="run-label"]`).innerText()).resolves.toMatch(/· EB-standardised( · controls for .+)?$/);
});

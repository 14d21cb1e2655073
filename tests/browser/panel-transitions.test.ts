import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { chiSquareIndependence, chiSquareUpperTail } from "@/lib/spatial";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { demoRun } from "@/tests/helpers/demo-run";

// The Region map shows the spatial Markov tables of unemployment over the demo run's
// whole panel (2008–2024, every year to the next) with the test of homogeneity and
// its cautions. The sentence is checked against the tables on the screen: Q is
// recomputed as the sum over earlier classes of Pearson's χ² of the neighbours'
// class × later class table (chiSquareIndependence, itself checked against R's
// chisq.test in tests/unit/spatial/contingency.test.ts) — the identity the R
// reference of the statistic uses (scripts/reference/spatial-markov-reference.R).

const slug = demo.workspace.slug;
const economist = demo.accounts.find((a) => a.role === "economist");
if (!economist) throw new Error("demo-accounts.json has no economist");

let session: BrowserSession;
let demoRunId: number;


beforeAll(async () => {
  testServices();
  const run = await demoRun(slug);
  demoRunId = run.id;
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeConnections();
});

jest.setTimeout(600_000);

/** The cells of one table on the screen (without the row totals). */
async function tableOnScreen(page: Page, testId: string): Promise<number[][]> {
  return page.evaluate(
    (id) =>
      [...document.querySelectorAll(`[data-testid="${id}"] tbody tr`)].map((tr) => {
        const cells = [...tr.querySelectorAll("td")].map((td) => Number(td.textContent));
        return cells.slice(0, cells.length - 1);
      }),
    testId,
  );
}

it("the map screen shows the panel transition table of unemployment over 2008–2024 with its test of homogeneity and the cautions", async () => {
  const { page } = session;
  await signIn(page, economist.email, economist.password);
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${demoRunId}&a=2013&b=2016`);
  await page.getByTestId("panel-transitions-pooled").waitFor();
  await expect(page.getByRole("heading", { name: "Class moves over the whole panel, 2008–2024, by the neighbours' class" }).count()).resolves.toBe(1);

  const pooled = await tableOnScreen(page, "panel-transitions-pooled");
  const conditional = await Promise.all([1, 2, 3, 4, 5].map((l) => tableOnScreen(page, `panel-transitions-lag-${l}`)));
  expect(pooled).toHaveLength(5);
  // 16 pairs of years × 236 regions: the two islets have no neighbours under the demo run's queen weights and are left out.
  const total = pooled.flat().reduce((s, v) => s + v, 0);
  expect(total).toBe(16 * 236);
  // The pooled table is the split tables added up.
  pooled.forEach((row, i) => row.forEach((v, j) => expect(conditional.reduce((s, t) => s + t[i][j], 0)).toBe(v)));
  // Fifths of 236 regions: the c-th cut point is the type-7 quantile at c/5, the sorted value at
  // position 47c (from 0), and a value equal to it is in the lower class, so at least 47c + 1
  // regions are in classes 1…c every year (more when values tie at the cut point).
  const starts = pooled.map((row) => row.reduce((s, v) => s + v, 0));
  for (let c = 1; c < 5; c++) expect(starts.slice(0, c).reduce((s, v) => s + v, 0)).toBeGreaterThanOrEqual(16 * (47 * c + 1));

  let q = 0;
  let df = 0;
  let cells = 0;
  let below5 = 0;
  for (let i = 0; i < 5; i++) {
    const test = chiSquareIndependence(conditional.map((t) => t[i]));
    if (test === null) throw new Error(`earlier class ${i + 1} has fewer than two neighbours' classes or outcomes on the screen`);
    q += test.chiSquare;
    df += test.degreesOfFreedom;
    cells += test.cells;
    below5 += test.expectedBelow5;
  }
  const p = chiSquareUpperTail(q, df);
  const pText = p < 0.001 ? "< 0.001" : p.toFixed(3);
  expect(await page.getByTestId("panel-transitions-test").innerText()).toBe(
    `Do the moves depend on the neighbours' class? Test of homogeneity of the 5 split tables against the table of all regions: χ² = ${q.toFixed(2)}, df ${df}, p = ${pText}.`,
  );
  const caution = await page.getByTestId("panel-transitions-caution").innerText();
  expect(caution).toContain("Neighbouring regions are not independent observations");
  expect(caution).toContain("so this p is optimistic");
  if (below5 > cells / 5) expect(caution).toContain(`${below5} of ${cells} cells of the test expect fewer than 5 moves: the χ² approximation is rough here.`);
  else expect(caution).not.toContain("fewer than 5");
  expect(await page.getByTestId("panel-transitions-dropped").innerText()).toBe(
    "32 region-year pairs are left out because the region has no neighbour with a value under the run's weights, so it has no neighbours' class.",
  );

  await page.getByTestId("panel-transitions").scrollIntoViewIfNeeded();
  await screenshot(page, "panel-transitions-unemployment-2008-2024");

  // Three classes: the same moves in thirds.
  await page.getByLabel("Number of quantile classes").selectOption("3");
  await page.getByTestId("panel-transitions-lag-3").waitFor();
  await expect(page.getByTestId("panel-transitions-lag-4").count()).resolves.toBe(0);
  const thirds = await tableOnScreen(page, "panel-transitions-pooled");
  expect(thirds.flat().reduce((s, v) => s + v, 0)).toBe(16 * 236);
});

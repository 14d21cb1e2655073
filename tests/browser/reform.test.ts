import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { AREAL_WEIGHTING_CAUTION } from "@/components/ui/cautions";
import { REFORM_BOUNDARY_SET, REFORM_PANEL } from "@/scripts/demo/veldmark/reform";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";

// A boundary reform from upload to a harmonised run, in the browser: the demo steward uploads a
// crosswalk CSV between the demo districts and the invented 2019 reform (the shares of the demo's
// derived crosswalk, as a statistics office would send them), sees its map and table, harmonises
// the demo panel with the figures observed on the new districts from 2019 (seeded by
// scripts/demo/seed-demo-reform.ts), publishes the new version, starts a run on it and reads the
// unemployment timeline with the reform's mark, its carried periods and the areal-weighting caution.

const slug = demo.workspace.slug;
const steward = demo.accounts.find((a) => a.role === "steward");
if (!steward) throw new Error("demo-accounts.json has no steward");

let session: BrowserSession;
const ids = { demoBoundaries: 0, reformBoundaries: 0, demoPanel: 0, continuation: 0 };
let csv = "";
let pairCount = 0;
/** Periods of the demo panel not observed on the new districts (carried), and the first observed there. */
let carried: string[] = [];
let firstOnTarget = "";

async function one<T extends object>(sql: string, bind: unknown[]): Promise<T> {
  const rows = await db().query<T>(sql, { bind, type: QueryTypes.SELECT });
  if (!rows[0]) throw new Error(`the demo workspace lacks what the reform test needs: ${sql}`);
  return rows[0];
}

beforeAll(async () => {
  testServices();
  const reform = await one<{ id: number }>(
    `SELECT bv.id FROM boundary_versions bv JOIN boundary_sets s ON s.id = bv.boundary_set_id JOIN workspaces w ON w.id = s.workspace_id
      WHERE w.slug = $1 AND s.name = $2 AND bv.state = 'published' ORDER BY bv.version DESC LIMIT 1`,
    [slug, REFORM_BOUNDARY_SET],
  );
  ids.reformBoundaries = reform.id;
  const derived = await one<{ id: number; from_boundary_version_id: number }>(
    "SELECT id, from_boundary_version_id FROM crosswalks WHERE to_boundary_version_id = $1 AND origin = 'derived' AND status = 'ready' ORDER BY id LIMIT 1",
    [reform.id],
  );
  ids.demoBoundaries = derived.from_boundary_version_id;
  const pairs = await db().query<{ from_code: string; to_code: string; share: number }>(
    "SELECT from_code, to_code, share FROM crosswalk_pairs WHERE crosswalk_id = $1 ORDER BY from_code, to_code",
    { bind: [derived.id], type: QueryTypes.SELECT },
  );
  pairCount = pairs.length;
  csv = `from,to,share\n${pairs.map((p) => `${p.from_code},${p.to_code},${Number(p.share)}`).join("\n")}\n`;
  const source = await one<{ id: number }>(
    `SELECT pv.id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id JOIN workspaces w ON w.id = p.workspace_id
      WHERE w.slug = $1 AND pv.boundary_version_id = $2 AND pv.state = 'published' AND pv.crosswalk_id IS NULL ORDER BY pv.id LIMIT 1`,
    [slug, derived.from_boundary_version_id],
  );
  ids.demoPanel = source.id;
  const continuation = await one<{ id: number }>(
    `SELECT pv.id FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id JOIN workspaces w ON w.id = p.workspace_id
      WHERE w.slug = $1 AND p.name = $2 AND pv.crosswalk_id IS NULL AND pv.state = 'published' ORDER BY pv.version LIMIT 1`,
    [slug, REFORM_PANEL],
  );
  ids.continuation = continuation.id;
  const periodsOf = async (id: number) =>
    (await db().query<{ period_key: string }>("SELECT DISTINCT period_key FROM observations WHERE panel_version_id = $1 ORDER BY period_key", { bind: [id], type: QueryTypes.SELECT })).map(
      (r) => r.period_key,
    );
  const observed = await periodsOf(continuation.id);
  carried = (await periodsOf(source.id)).filter((p) => !observed.includes(p));
  firstOnTarget = observed[0];
  expect(carried.length).toBeGreaterThan(1);
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(900_000);

it("a steward uploads a crosswalk, harmonises the demo panel onto the 2019 districts, publishes it, runs it and sees the reform on the timeline", async () => {
  const { page } = session;
  await signIn(page, steward.email, steward.password);

  // 1. Upload the crosswalk CSV between the demo districts and the reform.
  await page.goto(`/w/${slug}/intake/reforms`);
  await page.getByTestId("crosswalk-from").selectOption(String(ids.demoBoundaries));
  await page.getByTestId("crosswalk-to").selectOption(String(ids.reformBoundaries));
  await page.getByTestId("crosswalk-file").setInputFiles({ name: "veldmark-2019-shares.csv", mimeType: "text/csv", buffer: Buffer.from(csv) });
  await page.getByTestId("crosswalk-create").click();
  const notice = page.getByText(/^Crosswalk \d+ is (ready|rejected)\.$/);
  await notice.waitFor();
  const [, id, status] = (await notice.innerText()).match(/^Crosswalk (\d+) is (\w+)\.$/) ?? [];
  expect(status).toBe("ready");
  const crosswalkId = Number(id);

  // 2. Its map (merged and split regions) and its table.
  await page.goto(`/w/${slug}/intake/reforms/${crosswalkId}`);
  await page.locator('[data-testid="reform-map"] path').first().waitFor();
  expect(await page.locator('[data-testid="reform-map"] path').count()).toBeGreaterThan(200);
  await page.locator('[data-testid="crosswalk-grid"] .ag-row').first().waitFor();
  expect(await page.getByTestId("crosswalk-status").innerText()).toBe("ready");
  expect(await page.getByTestId("crosswalk-heading").innerText()).toContain("uploaded as veldmark-2019-shares.csv");
  // The report: no errors (the shares are the derived crosswalk's, all of them), every pair stored.
  expect((await page.locator('[data-testid="crosswalk-report"] dd').first().innerText()).trim()).toBe("0");
  const stored = await one<{ n: string }>("SELECT count(*) AS n FROM crosswalk_pairs WHERE crosswalk_id = $1", [crosswalkId]);
  expect(Number(stored.n)).toBe(pairCount);
  await screenshot(page, "reform-01-crosswalk");

  // 3. Harmonise the demo panel, with the figures observed on the new districts as its continuation.
  await page.getByTestId("harmonise-panel").selectOption(String(ids.demoPanel));
  await page.getByTestId("harmonise-methods").waitFor();
  await page.getByTestId("harmonise-continuation").selectOption(String(ids.continuation));
  await page.getByTestId("harmonise-submit").click();
  await page.getByTestId("harmonised-link").click();
  await page.waitForURL(/\/intake\/panels\/\d+$/);
  const versionId = Number(page.url().match(/\/panels\/(\d+)$/)?.[1]);

  // 4. The version screen names the provenance; publish it through its dialog.
  await page.locator('[data-testid="version-state"][data-state="validated"]').waitFor({ timeout: 180_000 });
  const provenance = await page.getByTestId("harmonisation-provenance").innerText();
  expect(provenance).toContain(`crosswalk ${crosswalkId} (uploaded shares)`);
  expect(await page.getByTestId("harmonisation-carried").innerText()).toBe(`${carried[0]}–${carried[carried.length - 1]} (${carried.length} periods)`);
  expect(await page.getByTestId("harmonisation-first").innerText()).toBe(firstOnTarget);
  expect(await page.getByTestId("harmonisation-methods").innerText()).toMatch(/unemployment_rate\s+intensive \(mean weighted by overlap area\)/);
  await page.getByText(AREAL_WEIGHTING_CAUTION).first().waitFor();
  await screenshot(page, "reform-02-harmonised-version");
  await page.getByRole("button", { name: "Publish…" }).click();
  const dialog = page.getByTestId("publish-dialog");
  await dialog.getByRole("button", { name: "Publish", exact: true }).click();
  await page.locator('[data-testid="version-state"][data-state="published"]').waitFor();
  const made = await one<{ name: string; version: number }>("SELECT p.name, pv.version FROM panel_versions pv JOIN panels p ON p.id = pv.panel_id WHERE pv.id = $1", [versionId]);

  // 5. A run on it: unemployment only, few permutations (the mark is what this test reads).
  await page.goto(`/w/${slug}/runs`);
  const form = page.getByRole("form", { name: "Start a run" });
  await form.waitFor();
  await page.getByLabel("Panel version", { exact: true }).selectOption({ label: `${made.name} — version ${made.version}` });
  const boxes = form.locator('fieldset input[type="checkbox"]');
  for (let i = 0; i < (await boxes.count()); i += 1) await boxes.nth(i).uncheck();
  await form.getByRole("group", { name: "Indicators" }).getByRole("checkbox", { name: "Unemployment rate", exact: true }).check();
  await page.getByLabel("Permutations", { exact: true }).fill("99");
  const local = form.getByRole("checkbox", { name: "Local clusters per region (needed for cluster maps)" });
  if (await local.isChecked()) await local.uncheck();
  await page.getByRole("button", { name: "Start run" }).click();
  const started = page.getByTestId("started-run");
  await started.waitFor();
  const runId = Number(await started.getAttribute("data-run-id"));
  await page.locator(`[data-testid="run-${runId}"][data-state="completed"]`).waitFor({ timeout: 300_000 });

  // 6. The timeline: the reform's mark at the first period on the new districts, what was carried and how, the caution.
  await page.goto(`/w/${slug}/timeline?indicator=unemployment_rate&run=${runId}`);
  await page.locator('[data-testid="timeline-moran"] svg').waitFor();
  const mark = page.locator('[data-testid="timeline-moran"] svg text', { hasText: `Carried across the ${firstOnTarget} reform before this` });
  expect(await mark.count()).toBe(1);
  const note = await page.getByTestId("timeline-reform").innerText();
  expect(note).toContain(`Periods ${carried[0]}–${carried[carried.length - 1]} (${carried.length} periods) were carried across the reform`);
  expect(note).toContain(`through crosswalk ${crosswalkId} (uploaded shares)`);
  expect(note).toContain(`From ${firstOnTarget} on, the values are as observed on ${REFORM_BOUNDARY_SET}`);
  expect(note).toContain(AREAL_WEIGHTING_CAUTION);
  expect(await page.getByTestId("timeline-reform-caption").innerText()).toContain(`crosswalk ${crosswalkId}`);
  await screenshot(page, "reform-03-timeline");

  // 7. The map of one carried and one observed period says which is which, with the same caution.
  const carriedPeriod = carried[carried.length - 1];
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${runId}&a=${carriedPeriod}&b=${firstOnTarget}`);
  const mapNote = page.getByTestId("map-reform");
  await mapNote.waitFor();
  const mapText = await mapNote.innerText();
  expect(mapText).toContain(`On this screen, ${carriedPeriod} is a carried estimate, not observed on these regions.`);
  expect(mapText).toContain(AREAL_WEIGHTING_CAUTION);
});

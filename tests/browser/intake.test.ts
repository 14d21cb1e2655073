import { execFileSync } from "node:child_process";
import path from "node:path";
import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";

// A steward, in the browser: uploads a panel over the demo boundaries, reads
// the validation report (rows and columns named), fixes and re-uploads,
// publishes, uploads a revision and reads its difference; then looks at the
// boundaries with a chosen weights rule.

jest.setTimeout(420_000);

const steward = demo.accounts.find((a) => a.role === "steward");
if (!steward) throw new Error("demo-accounts.json has no steward");
const slug = demo.workspace.slug;

let session: BrowserSession;

beforeAll(() => {
  testServices();
  // The demo boundaries and panel come in through the same intake path (idempotent).
  execFileSync(path.join(process.cwd(), "node_modules", ".bin", "tsx"), ["scripts/demo/seed-demo-data.ts"], { stdio: "inherit", env: process.env });
});

afterAll(async () => {
  await session?.close();
});

async function signIn(page: Page) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").fill(steward!.email);
  await page.getByLabel("Password").fill(steward!.password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"));
}

/** A long panel over the first ten Veldmark districts; `tweak` edits the lines before they are joined. */
function panelCsv(run: string, tweak: (lines: string[]) => void = () => undefined): string {
  const lines = ["region,period,indicator,value"];
  for (const year of [2020, 2021, 2022]) {
    for (let i = 1; i <= 10; i++) lines.push(`VM-${String(i).padStart(3, "0")},${year},browser_check_${run},${(i * 1.25 + year - 2020).toFixed(2)}`);
  }
  tweak(lines);
  return `${lines.join("\n")}\n`;
}

async function upload(page: Page, name: string, csv: string, panel: { newName?: string; existing?: string }, beforeSubmit: () => Promise<void> = async () => undefined) {
  await page.goto(`/w/${slug}/intake`);
  await page.getByTestId("upload-wizard").waitFor();
  await page.getByLabel("Indicator panel (CSV)").check();
  await page.getByTestId("upload-file").setInputFiles({ name, mimeType: "text/csv", buffer: Buffer.from(csv) });
  await page.getByText("arrived intact").waitFor({ timeout: 60_000 });
  if (panel.newName) {
    await page.getByLabel("Panel", { exact: true }).selectOption("new");
    await page.getByLabel("Panel name").fill(panel.newName);
    await page.getByLabel("Boundary set").selectOption({ label: "Regions from Veldmark districts" });
  } else if (panel.existing) {
    await page.getByLabel("Panel", { exact: true }).selectOption({ label: `New version of ${panel.existing}` });
  }
  await beforeSubmit();
  await page.getByRole("button", { name: "Validate panel" }).click();
  await page.waitForURL(/\/intake\/panels\/\d+$/);
  await page.locator('[data-testid="version-state"]:not([data-state="uploaded"])').waitFor({ timeout: 60_000 });
  return page.getByTestId("version-state").getAttribute("data-state");
}

test("a steward uploads a panel, reads the report, fixes, publishes and sees the next version's difference", async () => {
  session = await openBrowser();
  const { page } = session;
  // Generous: under `next dev` the first visit of each page compiles it.
  page.setDefaultTimeout(90_000);
  await signIn(page);
  const run = Date.now().toString(36);
  const panelName = `Browser check ${run}`;

  await page.goto(`/w/${slug}/intake`);
  await page.getByText("Veldmark districts", { exact: true }).first().waitFor();
  await screenshot(page, "intake-overview");

  // 1. A broken file: an unknown district and a word where a number belongs.
  const broken = panelCsv(run, (lines) => {
    lines[2] = lines[2].replace(/,[\d.]+$/, ",n/a-ish");
    lines[3] = lines[3].replace(/^VM-003/, "VM-999");
  });
  expect(await upload(page, "check.csv", broken, { newName: panelName })).toBe("rejected");
  const report = page.getByTestId("validation-report");
  await report.waitFor();
  expect(await report.getAttribute("data-ok")).toBe("false");
  const errors = page.getByTestId("report-errors");
  await expect(errors.innerText()).resolves.toMatch(/n\/a-ish/);
  const errorRows = await errors.locator("tbody tr").allInnerTexts();
  expect(errorRows.some((r) => /^2\s+value\b/.test(r))).toBe(true);
  expect(errorRows.some((r) => /^3\s+region\b/.test(r) && /VM-999/.test(r))).toBe(true);
  await expect(page.getByTestId("unknown-regions").innerText()).resolves.toContain("VM-999");
  await screenshot(page, "intake-rejected-report");

  // 2. Fixed and uploaded again: validated, then published.
  expect(await upload(page, "check-fixed.csv", panelCsv(run), { existing: panelName })).toBe("validated");
  // Publishing asks first, naming what becomes visible to whom; Escape backs out without publishing.
  await page.getByRole("button", { name: "Publish…" }).click();
  const publishDialog = page.getByRole("dialog", { name: /^Publish / });
  await publishDialog.waitFor();
  await expect(publishDialog.innerText()).resolves.toMatch(/10 regions[\s\S]*1 indicator[\s\S]*3 periods[\s\S]*30 observations[\s\S]*Economists and subscribers of .+ will see[\s\S]*cannot be changed, only archived/);
  await page.keyboard.press("Escape");
  await publishDialog.waitFor({ state: "hidden" });
  expect(await page.getByTestId("version-state").getAttribute("data-state")).toBe("validated");
  await page.getByRole("button", { name: "Publish…" }).click();
  await publishDialog.getByRole("button", { name: "Publish", exact: true }).click();
  await page.locator('[data-testid="version-state"][data-state="published"]').waitFor();

  // 3. A revision changing one value: its difference from the published version.
  const revised = panelCsv(run, (lines) => {
    lines[5] = lines[5].replace(/,[\d.]+$/, ",99.5");
  });
  expect(await upload(page, "check-revised.csv", revised, { existing: panelName })).toBe("validated");
  await page.getByTestId("version-diff").waitFor();
  await expect(page.getByTestId("changed-values").innerText()).resolves.toMatch(/^1 value present in both versions changed/);
  await screenshot(page, "intake-version-diff");

  // 4. The boundaries: regions drawn, neighbours under a chosen rule, islands counted.
  await page.goto(`/w/${slug}/intake`);
  // Other browser tests add boundary sets of their own (listed first when newer): open the demo's.
  await page.getByTestId("boundaries-Veldmark districts").locator('[data-testid^="boundaries-version-"] a').first().click();
  await page.waitForURL(/\/intake\/boundaries\/\d+$/);
  await page.getByTestId("boundary-map").locator("path").first().waitFor();
  expect(await page.getByTestId("boundary-map").locator("path").count()).toBeGreaterThan(200);
  await page.getByTestId("weights-facts").waitFor();
  const queenIslands = Number(await page.getByTestId("island-count").innerText());
  expect(queenIslands).toBeGreaterThan(0); // Veldmark has offshore districts
  await page.getByTestId("weights-rule").selectOption("knn");
  await page.waitForFunction(() => document.querySelector('[data-testid="island-count"]')?.textContent === "0");
  expect(await page.getByTestId("neighbour-histogram").locator("rect").count()).toBeGreaterThan(0);
  await screenshot(page, "intake-boundaries-knn");

  // 5. The demo panel declares a rate in its first line: the indicator says so, and the report shows it derived, without problems.
  await page.goto(`/w/${slug}/intake`);
  await expect(page.getByTestId("rate-business_closures_per_1000").innerText()).resolves.toBe(
    "Rate: business_closures / working_age_population × 1,000 (per 1,000)",
  );
  await page.getByTestId("panel-Veldmark district indicators 2008–2024").locator('[data-testid^="panel-version-"] a').first().click();
  await page.waitForURL(/\/intake\/panels\/\d+$/);
  const rate = page.getByTestId("report-rate-business_closures_per_1000");
  await expect(rate.innerText()).resolves.toMatch(/declared in the file\. Not in the file: derived at ingest from events and population — 4,046 value\(s\), 0 left missing\. No problems\./);
  await screenshot(page, "intake-rate-derived");

  // 6. A file declaring a rate whose counts disagree in one district: the preview names the rate, the report names the
  //    district and year, and the version stays usable.
  const lines = [`# rate: rate_${run} = closures_${run} / people_${run} * 1000`, "region,period,indicator,value"];
  for (let i = 1; i <= 10; i++) {
    const code = `VM-${String(i).padStart(3, "0")}`;
    lines.push(`${code},2020,closures_${run},${i === 2 ? 500 : i}`, `${code},2020,people_${run},${100 * i}`);
  }
  const state = await upload(page, "rate-check.csv", `${lines.join("\n")}\n`, { newName: `Rate check ${run}` }, async () => {
    await expect(page.getByTestId("preview-rates").innerText()).resolves.toContain(`rate_${run} = closures_${run} / people_${run} × 1,000`);
  });
  expect(state).toBe("validated");
  expect(await page.getByTestId("validation-report").getAttribute("data-ok")).toBe("true");
  const problems = await page.getByTestId("report-rate-problems").locator("tbody tr").allInnerTexts();
  expect(problems).toHaveLength(1);
  expect(problems[0]).toMatch(new RegExp(`^VM-002\\s+2020\\s+rate_${run}\\s+3\\s+events above population\\s+`));
  await screenshot(page, "intake-rate-problem");
});

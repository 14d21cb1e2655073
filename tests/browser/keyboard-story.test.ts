import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { demoRun } from "@/tests/helpers/demo-run";
import { closeConnections } from "@/tests/helpers/teardown";

// Keyboard only (issue 20, item 2): one whole story with page.keyboard and nothing else (no clicks,
// no fills): the manager signs in, skips to the content, uploads a boundary set and a panel over it
// and publishes both through their dialogs, starts a run on the panel and hears it finish, filters
// the catalogue, picks a region on a map and opens the map's table, subscribes to digests and
// invites a colleague. After every step focus is on something visible (never lost to <body>),
// and every element reached shows a focus indicator.

jest.setTimeout(900_000);

const slug = demo.workspace.slug;
const manager = demo.accounts.find((a) => a.role === "manager");
if (!manager) throw new Error("demo-accounts.json has no manager");

const SIDE = 5;
let session: BrowserSession;

beforeAll(() => {
  testServices();
});

afterAll(async () => {
  await session?.close();
  await closeConnections();
});

type Focused = { tag: string; role: string | null; name: string; id: string; visibleFocus: boolean; onScreen: boolean };

/** What has focus: tag, role, accessible-ish name, and whether a focus indicator shows. */
async function focused(page: Page): Promise<Focused> {
  return page.evaluate(() => {
    const el = document.activeElement as HTMLElement | null;
    if (!el || el === document.body) return { tag: "body", role: null, name: "", id: "", visibleFocus: false, onScreen: false };
    const labels = (el as HTMLInputElement).labels;
    const name = (
      el.getAttribute("aria-label") ??
      (labels && labels.length ? labels[0].textContent : null) ??
      el.textContent ??
      ""
    )
      .replace(/\s+/g, " ")
      .trim();
    const style = getComputedStyle(el);
    const outline = style.outlineStyle !== "none" && parseFloat(style.outlineWidth) > 0;
    const ring = style.boxShadow !== "none";
    // A map region shows focus as an outline path drawn over the map.
    const svgFocus = el instanceof SVGElement && Boolean(el.ownerSVGElement?.querySelector('[data-testid$="-focus"]'));
    const box = el.getBoundingClientRect();
    const onScreen = box.width > 0 && box.height > 0 && box.bottom > 0 && box.right > 0;
    return { tag: el.tagName.toLowerCase(), role: el.getAttribute("role"), name, id: el.id, visibleFocus: outline || ring || svgFocus, onScreen };
  });
}

/** Presses Tab (or Shift+Tab) until the focused element matches; fails after `max` presses. */
async function tabTo(page: Page, match: (f: Focused) => boolean, what: string, { max = 120, back = false } = {}): Promise<Focused> {
  for (let i = 0; i < max; i++) {
    await page.keyboard.press(back ? "Shift+Tab" : "Tab");
    const f = await focused(page);
    if (match(f)) {
      expect({ what, visibleFocus: f.visibleFocus, onScreen: f.onScreen }).toEqual({ what, visibleFocus: true, onScreen: true });
      return f;
    }
  }
  throw new Error(`Tab never reached ${what} within ${max} presses (last: ${JSON.stringify(await focused(page))})`);
}

const named = (name: string | RegExp, tag?: string) => (f: Focused) => (tag ? f.tag === tag : true) && (typeof name === "string" ? f.name === name : name.test(f.name));

async function expectFocusKept(page: Page, step: string): Promise<void> {
  const f = await focused(page);
  expect({ step, tag: f.tag }).not.toEqual({ step, tag: "body" });
}

/** Through the workspace navigation: Shift+Tab back up to the link, Enter. */
async function goTo(page: Page, link: string, path: RegExp): Promise<void> {
  await tabTo(page, (f) => f.tag === "a" && f.name === link, `the ${link} link`, { back: true, max: 400 });
  await page.keyboard.press("Enter");
  await page.waitForURL(path);
  await page.waitForLoadState("load");
}

async function typeInto(page: Page, match: (f: Focused) => boolean, what: string, text: string): Promise<void> {
  await tabTo(page, match, what);
  await page.keyboard.press("ControlOrMeta+A");
  await page.keyboard.type(text);
}

function gridGeoJson(tag: string): string {
  const features = [];
  for (let row = 0; row < SIDE; row++) {
    for (let col = 0; col < SIDE; col++) {
      const n = row * SIDE + col + 1;
      const x = 150_000 + col * 1_000;
      const y = 400_000 + row * 1_000;
      features.push({
        type: "Feature",
        properties: { code: `KB${tag}-${n}`, name: `Toetsdal ${n}` },
        geometry: { type: "Polygon", coordinates: [[[x, y], [x + 1_000, y], [x + 1_000, y + 1_000], [x, y + 1_000], [x, y]]] },
      });
    }
  }
  return JSON.stringify({ type: "FeatureCollection", features });
}

function panelCsv(tag: string, indicator: string): string {
  const lines = ["region,period,indicator,value"];
  for (const [p, period] of ["2021", "2022"].entries()) {
    for (let n = 1; n <= SIDE * SIDE; n++) {
      const row = Math.floor((n - 1) / SIDE);
      const col = (n - 1) % SIDE;
      lines.push(`KB${tag}-${n},${period},${indicator},${(10 + 2 * row + 1.5 * col + p + ((n * 7) % 5) / 10).toFixed(2)}`);
    }
  }
  return `${lines.join("\n")}\n`;
}

/** Picks a file with the keyboard: the file input opens its chooser on Space, and the chooser is answered. */
async function uploadWithKeyboard(page: Page, kind: "panel" | "boundaries", file: { name: string; mimeType: string; body: string }): Promise<void> {
  await goTo(page, "Intake", /\/intake$/);
  await page.getByTestId("upload-wizard").waitFor();
  // The kind radios: Tab into the group, arrows choose.
  await tabTo(page, (f) => f.tag === "input" && f.name.startsWith("Indicator panel") || f.name.startsWith("Boundaries ("), "the upload kind radios");
  const want = kind === "panel" ? "Indicator panel (CSV)" : "Boundaries (TopoJSON or GeoJSON)";
  for (let i = 0; i < 2 && (await focused(page)).name !== want; i++) await page.keyboard.press("ArrowRight");
  expect((await focused(page)).name).toBe(want);
  await page.keyboard.press("Space");
  await tabTo(page, (f) => f.tag === "input" && f.id === "upload-file", "the file field");
  const [chooser] = await Promise.all([page.waitForEvent("filechooser"), page.keyboard.press("Space")]);
  await chooser.setFiles({ name: file.name, mimeType: file.mimeType, buffer: Buffer.from(file.body) });
  await page.getByText("arrived intact").waitFor({ timeout: 60_000 });
  // The upload's progress and arrival were announced politely.
  expect(await page.getByTestId("upload-announcer").textContent()).toContain("Upload complete");
}

/** On a version page: Tab to "Publish…", Enter, Tab to the dialog's Publish, Enter; focus stays on the page. */
async function publishWithKeyboard(page: Page): Promise<void> {
  await page.locator('[data-testid="version-state"][data-state="validated"]').waitFor({ timeout: 120_000 });
  await tabTo(page, named("Publish…", "button"), "the Publish… button");
  await page.keyboard.press("Enter");
  await page.getByTestId("publish-dialog").waitFor();
  // The dialog took focus; Tab stays inside it until its Publish button.
  await tabTo(page, named("Publish", "button"), "the dialog's Publish button", { max: 6 });
  await page.keyboard.press("Enter");
  await page.locator('[data-testid="version-state"][data-state="published"]').waitFor();
  await expectFocusKept(page, "after publishing");
}

it("a manager's whole story works with the keyboard alone, focus always visible and never lost", async () => {
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  const { page } = session;
  page.setDefaultTimeout(120_000);
  const tag = Date.now().toString(36).slice(-5).toUpperCase();
  const setName = `Toetsdal grid ${tag}`;
  const panelName = `Toetsdal panel ${tag}`;
  const indicator = `kb_jobs_${tag.toLowerCase()}`;

  // 1. Sign in: the skip link comes first, then the fields and the button.
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").waitFor();
  await tabTo(page, named("Skip to main content", "a"), "the skip link");
  await typeInto(page, named("E-mail address", "input"), "the e-mail field", manager.email);
  await typeInto(page, named("Password", "input"), "the password field", manager.password);
  await page.keyboard.press("Enter");
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"));
  // The demo workspace's Desk, its address typed (the manager may belong to more workspaces).
  await page.goto(`/w/${slug}/desk`);
  await page.locator("#main-content").waitFor();

  // 2. The skip link moves focus to the main content.
  await tabTo(page, named("Skip to main content", "a"), "the skip link", { max: 2 });
  await page.keyboard.press("Enter");
  expect((await focused(page)).id).toBe("main-content");

  // 3. A boundary set, uploaded, described and published.
  await uploadWithKeyboard(page, "boundaries", { name: `toetsdal-${tag}.geojson`, mimeType: "application/geo+json", body: gridGeoJson(tag) });
  await typeInto(page, named("Name of the new boundary set", "input"), "the set name", setName);
  await tabTo(page, named("Region code property", "select"), "the region code property");
  await page.keyboard.type("code");
  await tabTo(page, named("Validate boundaries", "button"), "Validate boundaries");
  await page.keyboard.press("Enter");
  await page.waitForURL(/\/intake\/boundaries\/\d+$/);
  await publishWithKeyboard(page);

  // 4. A panel over it, published.
  await uploadWithKeyboard(page, "panel", { name: `toetsdal-${tag}.csv`, mimeType: "text/csv", body: panelCsv(tag, indicator) });
  await typeInto(page, named("Panel name", "input"), "the panel name", panelName);
  await tabTo(page, named("Boundary set", "select"), "the boundary set");
  await page.keyboard.type(`Regions from ${setName}`);
  expect(await page.locator('select[aria-label="Boundary set"]').last().evaluate((s) => (s as HTMLSelectElement).selectedOptions[0]?.textContent ?? "")).toContain(setName);
  await tabTo(page, named("Validate panel", "button"), "Validate panel");
  await page.keyboard.press("Enter");
  await page.waitForURL(/\/intake\/panels\/\d+$/);
  await publishWithKeyboard(page);
  await screenshot(page, "keyboard-01-published");

  // 5. A run on the new panel; the announcer says when it finished.
  await goTo(page, "Runs", /\/runs$/);
  await page.getByRole("form", { name: "Start a run" }).waitFor();
  await tabTo(page, named("Panel version", "select"), "the panel version");
  await page.keyboard.type(panelName);
  await tabTo(page, named("Start run", "button"), "Start run");
  await page.keyboard.press("Enter");
  await page.getByTestId("started-run").waitFor();
  await expectFocusKept(page, "after starting the run");
  await page.getByTestId("run-announcer").filter({ hasText: /finished\./ }).waitFor({ timeout: 300_000 });

  // 6. The catalogue filtered with the keyboard.
  await goTo(page, "Catalogue", /\/catalogue/);
  await tabTo(page, (f) => f.tag === "button" && /^Clustering/.test(f.name), "a significance filter");
  const before = await page.evaluate(() => document.activeElement?.getAttribute("aria-pressed"));
  await page.keyboard.press("Space");
  // The filter lives in the address (router.replace), so the pressed state follows a moment later.
  await page
    .waitForFunction((was) => document.activeElement?.getAttribute("aria-pressed") !== was, before, { timeout: 15_000 })
    .catch(() => undefined);
  const after = await page.evaluate(() => document.activeElement?.getAttribute("aria-pressed"));
  expect([before, after]).toEqual([before, before === "true" ? "false" : "true"]);

  // 7. A region picked on a map, then the map's table opened. The map has no menu entry (it opens
  // from results); its address is typed, which is a keyboard action too.
  const { id: demoRunId } = await demoRun(slug);
  await page.goto(`/w/${slug}/map?indicator=unemployment_rate&run=${demoRunId}`);
  await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
  const first = await tabTo(page, (f) => f.role === "button" && f.tag === "path", "a region of the first cluster map", { max: 200 });
  await page.keyboard.press("ArrowRight");
  const second = await focused(page);
  expect(second.name).not.toBe(first.name);
  expect(second.visibleFocus).toBe(true);
  await page.keyboard.press("Enter");
  const region = await page.evaluate(() => document.activeElement?.getAttribute("data-region") ?? "");
  expect(region).not.toBe("");
  // Picked: the region is pressed (waited for: React applies the state after the key's handler).
  await page.locator(`[data-testid="cluster-map-a"] path[data-region="${region}"][aria-pressed="true"]`).waitFor({ timeout: 15_000 });
  await tabTo(page, (f) => f.tag === "button" && f.name.startsWith("Table: Local clusters"), "the cluster map's Table button", { max: 20 });
  await page.keyboard.press("Enter");
  await page.getByTestId("cluster-map-a-table").waitFor();
  await screenshot(page, "keyboard-02-map-table");

  // 8. Subscribed to digests.
  await goTo(page, "Digests", /\/digests$/);
  await page.getByRole("form", { name: "Digest subscription" }).waitFor();
  const receive = page.getByRole("checkbox", { name: "Receive digests" });
  await tabTo(page, named("Receive digests", "input"), "Receive digests");
  if (!(await receive.isChecked())) await page.keyboard.press("Space");
  await tabTo(page, named("Save subscription", "button"), "Save subscription");
  await page.keyboard.press("Enter");
  await page.getByText("Saved.").waitFor();
  await expectFocusKept(page, "after saving the subscription");

  // 9. A colleague invited.
  await goTo(page, "Team", /\/team$/);
  await typeInto(page, named("E-mail address", "input"), "the invitation e-mail", `keyboard-${tag.toLowerCase()}@veldmark.example`);
  await tabTo(page, named("Send invitation", "button"), "Send invitation");
  await page.keyboard.press("Enter");
  await page.getByText(`Invitation queued for keyboard-${tag.toLowerCase()}@veldmark.example`).waitFor();
  await expectFocusKept(page, "after inviting");
});

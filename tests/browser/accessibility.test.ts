import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { openBrowser, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { signIn } from "@/tests/helpers/sign-in";
import { axeScan, describeFindings, type AxeFinding } from "./axe-scan";

// WCAG 2.1 AA on every screen (issue 20, item 1): axe-core at the wcag2a, wcag2aa, wcag21a and
// wcag21aa tags finds nothing on any screen, for each of the four roles, in the main states: the
// demo workspace with data, an empty workspace, a form showing its error, a dialog open, and the
// maps' and charts' data tables opened. A new violation anywhere fails the test that met it.

jest.setTimeout(1_800_000);

const slug = demo.workspace.slug;
const account = (role: string) => {
  const a = demo.accounts.find((x) => x.role === role);
  if (!a) throw new Error(`demo-accounts.json has no ${role}`);
  return a;
};
const ROLES = ["manager", "steward", "economist", "subscriber"] as const;

/** Every workspace screen without an id in its path. */
const SCREENS = ["desk", "catalogue", "timeline", "map", "compare", "runs", "intake", "intake/reforms", "digests", "team", "outbox"];

let session: BrowserSession;

beforeAll(async () => {
  testServices();
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(60_000);
});

afterAll(async () => {
  await session?.close();
});

/** Waits until the screen has stopped saying it is loading (its queries answered). */
async function settle(page: Page): Promise<void> {
  await page.waitForLoadState("load");
  await page
    .waitForFunction(() => !/Loading[^<]*…/.test(document.querySelector("main")?.textContent ?? ""), undefined, { timeout: 30_000 })
    .catch(() => undefined);
  await page.waitForTimeout(400);
}

async function visit(page: Page, path: string, screen: string, into: AxeFinding[]): Promise<void> {
  await page.goto(path);
  await settle(page);
  into.push(...(await axeScan(page, screen)));
}

/** Opens every figure's "Table" view on the page and scans it with the tables shown. */
async function withTables(page: Page, screen: string, into: AxeFinding[]): Promise<number> {
  const toggles = page.getByRole("button", { name: /^Table/ });
  const n = await toggles.count();
  for (let i = 0; i < n; i++) {
    const toggle = toggles.nth(i);
    if ((await toggle.getAttribute("aria-pressed")) !== "true") await toggle.click();
  }
  if (n > 0) {
    await page.waitForTimeout(300);
    into.push(...(await axeScan(page, `${screen} (tables shown)`)));
  }
  return n;
}

/** A 4×4 grid of 1 km squares in planar metres with codes unique to this execution. */
function gridGeoJson(stamp: string): string {
  const features = [];
  for (let n = 0; n < 16; n++) {
    const x = 150_000 + (n % 4) * 1_000;
    const y = 400_000 + Math.floor(n / 4) * 1_000;
    features.push({
      type: "Feature",
      properties: { code: `AX${stamp}-${n + 1}`, name: `Toegang ${n + 1}` },
      geometry: { type: "Polygon", coordinates: [[[x, y], [x + 1_000, y], [x + 1_000, y + 1_000], [x, y + 1_000], [x, y]]] },
    });
  }
  return JSON.stringify({ type: "FeatureCollection", features });
}

/** The first link on the page whose path matches, or null. */
async function firstHref(page: Page, pattern: RegExp): Promise<string | null> {
  const hrefs = await page.locator("a[href]").evaluateAll((as) => as.map((a) => (a as HTMLAnchorElement).getAttribute("href") ?? ""));
  return hrefs.find((h) => pattern.test(h)) ?? null;
}

it("the public screens (sign-in, its error, an unknown invitation, not found) have no WCAG 2.1 AA violation", async () => {
  const { page } = session;
  const findings: AxeFinding[] = [];
  await session.context.clearCookies();
  await visit(page, "/sign-in", "sign-in", findings);
  await page.getByLabel("E-mail address").fill("nobody@veldmark.example");
  await page.getByLabel("Password").fill("not the password");
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.getByRole("alert").first().waitFor();
  findings.push(...(await axeScan(page, "sign-in (error)")));
  await visit(page, "/invite/not-a-real-token", "invitation (unknown)", findings);
  await visit(page, "/no-such-page", "not found", findings);
  expect(describeFindings(findings)).toBe("");
});

for (const role of ROLES) {
  it(`every screen of the demo workspace has no WCAG 2.1 AA violation for the ${role}`, async () => {
    const { page } = session;
    const { email, password } = account(role);
    const findings: AxeFinding[] = [];
    await session.context.clearCookies();
    await signIn(page, email, password);
    for (const screen of SCREENS) {
      await visit(page, `/w/${slug}/${screen}`, screen, findings);
      if (["timeline", "map", "compare"].includes(screen)) await withTables(page, screen, findings);
    }
    // Screens reached through a link: a version, a crosswalk, a captured message.
    await page.goto(`/w/${slug}/intake`);
    await settle(page);
    for (const [pattern, screen] of [
      [/\/intake\/panels\/\d+/, "panel version"],
      [/\/intake\/boundaries\/\d+/, "boundary version"],
    ] as const) {
      const href = await firstHref(page, pattern);
      if (href) await visit(page, href, screen, findings);
    }
    await page.goto(`/w/${slug}/intake/reforms`);
    await settle(page);
    const crosswalk = await firstHref(page, /\/intake\/reforms\/\d+/);
    if (crosswalk) {
      await visit(page, crosswalk, "crosswalk", findings);
      await withTables(page, "crosswalk", findings);
    }
    await page.goto(`/w/${slug}/outbox`);
    await settle(page);
    const message = await firstHref(page, /\/outbox\/\d+/);
    if (message) await visit(page, message, "captured message", findings);
    await visit(page, "/account", "account", findings);
    await visit(page, "/workspaces/new", "new workspace", findings);
    expect(describeFindings(findings)).toBe("");
  });
}

it("forms showing their errors, a dialog open and an empty workspace have no WCAG 2.1 AA violation", async () => {
  const { page } = session;
  const manager = account("manager");
  const findings: AxeFinding[] = [];
  await session.context.clearCookies();
  await signIn(page, manager.email, manager.password);

  // A form error: the password change with a wrong current password.
  await page.goto("/account");
  await settle(page);
  await page.getByLabel("Current password").fill("not-the-current-password");
  await page.getByLabel("New password", { exact: true }).fill("a-new-password-long-enough");
  await page.getByLabel("New password again").fill("a-new-password-long-enough");
  await page.getByRole("button", { name: /Change password/ }).click();
  await page.getByRole("alert").first().waitFor();
  findings.push(...(await axeScan(page, "account (error)")));

  // A form error: an invitation to an address that is not one.
  await page.goto(`/w/${slug}/team`);
  await settle(page);
  const inviteEmail = page.getByLabel(/E-mail/).first();
  await inviteEmail.fill("not-an-address");
  await page.getByRole("button", { name: /Invite|Send invitation/ }).first().click();
  await page.waitForTimeout(800);
  findings.push(...(await axeScan(page, "team (invitation error)")));

  // An empty workspace, made through the form (after a slug it refuses).
  const stamp = Date.now().toString(36);
  await page.goto("/workspaces/new");
  await settle(page);
  await page.getByLabel(/Name/).fill(`Accessibility check ${stamp}`);
  await page.getByLabel(/Slug|Address/).fill("Not A Slug!");
  await page.getByRole("button", { name: /Create/ }).click();
  await page.waitForTimeout(800);
  findings.push(...(await axeScan(page, "new workspace (error)")));
  const emptySlug = `a11y-${stamp}`;
  await page.getByLabel(/Slug|Address/).fill(emptySlug);
  await page.getByRole("button", { name: /Create/ }).click();
  await page.waitForURL((url) => url.pathname.startsWith(`/w/${emptySlug}`));
  for (const screen of SCREENS) await visit(page, `/w/${emptySlug}/${screen}`, `empty ${screen}`, findings);

  // The upload wizard's steps and a dialog open: a small boundary set uploaded, validated, and its publish dialog.
  await page.goto(`/w/${slug}/intake`);
  await settle(page);
  await page.getByLabel("Boundaries (TopoJSON or GeoJSON)").check();
  await page.getByTestId("upload-file").setInputFiles({ name: `a11y-${stamp}.geojson`, mimeType: "application/geo+json", buffer: Buffer.from(gridGeoJson(stamp)) });
  await page.getByText("arrived intact").waitFor();
  findings.push(...(await axeScan(page, "intake (describe the upload)")));
  await page.getByLabel("Name of the new boundary set").fill(`Accessibility grid ${stamp}`);
  await page.getByLabel("Region code property").selectOption("code");
  await page.getByRole("button", { name: "Validate boundaries" }).click();
  await page.waitForURL(/\/intake\/boundaries\/\d+$/);
  await page.locator('[data-testid="version-state"][data-state="validated"]').waitFor({ timeout: 120_000 });
  await settle(page);
  findings.push(...(await axeScan(page, "boundary version (validated)")));
  await withTables(page, "boundary version", findings);
  await page.getByRole("button", { name: "Publish…" }).click();
  await page.locator("dialog[open]").waitFor();
  findings.push(...(await axeScan(page, "boundary version (publish dialog)")));
  await page.keyboard.press("Escape");
  expect(describeFindings(findings)).toBe("");
});

import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { signIn } from "@/tests/helpers/sign-in";
import { closeConnections } from "@/tests/helpers/teardown";

// The API reference page renders the OpenAPI document (lib/api-docs): a
// subscriber finds it from the top bar, sees the runs routes with their roles,
// parameters and body fields, and reaches it from the Account screen too.

const slug = demo.workspace.slug;
const subscriber = demo.accounts.find((a) => a.role === "subscriber");
if (!subscriber) throw new Error("demo-accounts.json needs a subscriber");

let session: BrowserSession;

beforeAll(async () => {
  testServices();
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(60_000);
}, 120_000);

afterAll(async () => {
  await session?.close();
  await closeConnections();
});

it("opens the API reference from the top bar and shows a route with its roles, parameters and body", async () => {
  const { page } = session;
  await signIn(page, subscriber.email, subscriber.password);
  await page.goto(`/w/${slug}/desk`);
  await page.getByTestId("api-reference-link").click();
  await page.waitForURL(/\/api-reference$/);
  await expect(page.getByRole("heading", { level: 1, name: "API reference" }).isVisible()).resolves.toBe(true);

  const startRun = page.locator('[data-testid="api-route"][data-method="POST"][data-path="/api/w/{slug}/runs"]');
  await startRun.waitFor();
  const text = await startRun.innerText();
  expect(text).toContain("Start a run");
  expect(text).toContain("Economist");
  expect(text).not.toContain("Subscriber");
  expect(text).toContain("permutations");
  expect(text).toContain("panelVersionId");
  expect(text).toMatch(/201/);

  await expect(page.getByRole("heading", { level: 2, name: "Runs" }).isVisible()).resolves.toBe(true);
  await expect(page.getByRole("link", { name: "/api/openapi.json" }).getAttribute("href")).resolves.toBe("/api/openapi.json");
  await screenshot(page, "api-reference");

  await page.goto("/account");
  await page.getByTestId("account-api-reference").click();
  await page.waitForURL(/\/api-reference$/);
}, 120_000);

it("sends a signed-out visitor to sign in", async () => {
  const { page, context } = session;
  await context.clearCookies();
  await page.goto("/api-reference");
  await page.waitForURL(/\/sign-in/);
}, 60_000);

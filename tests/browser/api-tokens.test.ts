import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices } from "@/tests/helpers/env";
import { signIn } from "@/tests/helpers/sign-in";

// Access tokens in the browser: an economist creates one on the Account
// screen (its secret shown once, with Copy), a script uses it, and the
// workspace's manager revokes it from the Team screen's "API tokens" panel.

const slug = demo.workspace.slug;
const account = (role: string) => {
  const found = demo.accounts.find((a) => a.role === role);
  if (!found) throw new Error(`demo-accounts.json has no ${role}`);
  return found;
};

let session: BrowserSession;
let appUrl: string;

beforeAll(() => {
  appUrl = testServices().appUrl;
});
afterEach(async () => {
  await session?.close();
});

const runsWith = (token: string) => fetch(`${appUrl}/api/w/${slug}/runs`, { headers: { authorization: `Bearer ${token}` } });

it("an economist creates a token on Account (shown once), and a manager revokes it on Team", async () => {
  const name = `browser script ${Date.now().toString(36)}`;
  session = await openBrowser();
  const { page, context } = session;
  await context.grantPermissions(["clipboard-read", "clipboard-write"], { origin: appUrl });
  const economist = account("economist");
  await signIn(page, economist.email, economist.password);
  await page.goto("/account");
  await page.getByRole("heading", { name: "Access tokens" }).waitFor();
  await page.getByLabel("Workspace").selectOption(slug);
  await page.getByLabel("Name").fill(name);
  // An economist can give a token at most their own role.
  const roleOptions = await page.getByLabel("Role").locator("option").allInnerTexts();
  expect(roleOptions).toEqual(["Economist", "Subscriber"]);
  await page.getByLabel("Role").selectOption("economist");
  await page.getByLabel("Expires after").selectOption("7");
  await page.getByRole("button", { name: "Create token" }).click();
  const secret = page.getByTestId("new-token-secret");
  await secret.waitFor();
  const token = (await secret.innerText()).trim();
  expect(token).toMatch(/^tsr_[0-9a-f]{32}_[A-Za-z0-9_-]{43}$/);
  await expect(page.getByTestId("new-token").innerText()).resolves.toMatch(/shown only this once/);
  await page.getByRole("button", { name: "Copy", exact: true }).click();
  await page.getByRole("button", { name: "Copied" }).waitFor();
  expect(await page.evaluate(() => navigator.clipboard.readText())).toBe(token);
  const row = page.locator("[data-testid=token-table] tr", { hasText: name });
  await row.waitFor();
  await expect(row.innerText()).resolves.toMatch(/Economist[\s\S]*Never used[\s\S]*Active/);
  await screenshot(page, "account-token-created");

  // The token works as the economist, and the Account screen records its use.
  expect((await runsWith(token)).status).toBe(200);
  await page.reload();
  await page.getByRole("heading", { name: "Access tokens" }).waitFor();
  await page.locator("[data-testid=token-table] tr", { hasText: name }).waitFor();
  // Shown once: after a reload the secret is nowhere on the page.
  expect(await page.content()).not.toContain(token.split("_").at(-1));
  await expect(page.locator("[data-testid=token-table] tr", { hasText: name }).innerText()).resolves.not.toMatch(/Never used/);
  await session.close();

  // The manager sees it on Team and revokes it.
  session = await openBrowser();
  const manager = account("manager");
  await signIn(session.page, manager.email, manager.password);
  await session.page.goto(`/w/${slug}/team`);
  const panel = session.page.locator("section", { has: session.page.getByRole("heading", { name: "API tokens" }) });
  const teamRow = panel.locator("tr", { hasText: name });
  await teamRow.waitFor();
  await expect(teamRow.innerText()).resolves.toContain(economist.email);
  await teamRow.getByRole("button", { name: `Revoke token ${name}` }).click();
  await panel.locator("tr", { hasText: name }).filter({ hasText: "Revoked" }).waitFor();
  await screenshot(session.page, "team-token-revoked");
  const refused = await runsWith(token);
  expect(refused.status).toBe(401);
});

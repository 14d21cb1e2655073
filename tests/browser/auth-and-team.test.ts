import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { testServices, uniqueAddress } from "@/tests/helpers/env";

// Drives the real app (next start on the test port, or next dev) with Debian's
// chromium: sign-in for each demo role, what each role sees and may not see,
// and a manager's invitation followed through the captured mail to a new account.

const account = (role: string) => {
  const found = demo.accounts.find((a) => a.role === role);
  if (!found) throw new Error(`demo-accounts.json has no ${role}`);
  return found;
};
const slug = demo.workspace.slug;

const EXPECTED_NAV: Record<string, string[]> = {
  manager: ["Desk", "Catalogue", "Intake", "Runs", "Digests", "Team", "Outbox"],
  steward: ["Desk", "Catalogue", "Intake", "Runs", "Digests"],
  economist: ["Desk", "Catalogue", "Runs", "Digests"],
  subscriber: ["Desk", "Catalogue", "Digests"],
};
const ROLE_LABEL: Record<string, string> = { manager: "Manager", steward: "Data steward", economist: "Economist", subscriber: "Subscriber" };
const SCREENS = ["desk", "catalogue", "intake", "runs", "digests", "team", "outbox"];
const FORBIDDEN_TEXT = "You do not have access to this screen";

async function signIn(page: Page, email: string, password: string) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").fill(email);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
}

async function navLabels(page: Page): Promise<string[]> {
  return page.locator('nav[aria-label="Workspace"] a').allInnerTexts();
}

async function signOut(page: Page) {
  await page.getByRole("button", { name: "Sign out" }).click();
  await page.waitForURL(/\/sign-in/);
  await page.getByText("You have signed out.").waitFor();
}

let session: BrowserSession;

beforeAll(() => {
  testServices();
});

afterEach(async () => {
  await session?.close();
});

describe("signing in", () => {
  it("sends a visitor without a session to the sign-in page, and shows one message for any wrong credentials", async () => {
    session = await openBrowser();
    const { page } = session;
    await page.goto(`/w/${slug}/team`);
    await page.waitForURL(/\/sign-in\?callbackUrl=/);
    await screenshot(page, "sign-in");

    // Scoped to the form: Next's route announcer is also role="alert".
    const formAlert = page.locator('form [role="alert"]');
    await signIn(page, account("steward").email, "not-the-password");
    const wrongPassword = await formAlert.innerText();
    await signIn(page, uniqueAddress("nobody"), "not-the-password");
    const unknownAddress = await formAlert.innerText();
    expect(wrongPassword).toBe("That e-mail address and password do not match an account. Check both and try again.");
    expect(unknownAddress).toBe(wrongPassword);
    expect(page.url()).toContain("/sign-in");
  });

  for (const role of ["manager", "steward", "economist", "subscriber"]) {
    it(`shows a ${role} exactly the screens the role may use`, async () => {
      session = await openBrowser();
      const { page, context } = session;
      const { email, password, name } = account(role);
      await signIn(page, email, password);
      await page.waitForURL(new RegExp(`/w/${slug}/desk$`));

      const cookie = (await context.cookies()).find((c) => c.name.endsWith("next-auth.session-token"));
      expect(cookie).toMatchObject({ httpOnly: true, sameSite: "Lax" });

      expect(await page.getByTestId("user-name").innerText()).toBe(name);
      expect(await page.getByTestId("desk-role").innerText()).toBe(ROLE_LABEL[role]);
      expect(Number(await page.getByTestId("desk-members").innerText())).toBeGreaterThanOrEqual(4);
      await page.getByText("Read results with care").waitFor();
      expect(await navLabels(page)).toEqual(EXPECTED_NAV[role]);
      await screenshot(page, `desk-${role}`);

      // Every screen not in the nav refuses; every screen in it opens.
      for (const screen of SCREENS) {
        await page.goto(`/w/${slug}/${screen}`);
        // Wait for the page itself (not the loading skeleton) before judging it.
        await page.locator("main h1").first().waitFor();
        const allowed = EXPECTED_NAV[role].map((s) => s.toLowerCase()).includes(screen);
        const forbidden = await page.getByText(FORBIDDEN_TEXT).isVisible();
        expect({ screen, forbidden }).toEqual({ screen, forbidden: !allowed });
      }
      if (role === "subscriber") await page.goto(`/w/${slug}/team`).then(() => screenshot(page, "team-forbidden-subscriber"));

      // The team API answers 403 to non-managers and 200 to managers.
      const api = await page.request.get(`/api/w/${slug}/members`);
      expect(api.status()).toBe(role === "manager" ? 200 : 403);

      // A workspace one does not belong to does not exist.
      const missing = await page.goto(`/w/not-${slug}-${Date.now()}/desk`);
      expect(missing?.status()).toBe(404);
      await page.getByText("There is nothing here for you").first().waitFor();

      await page.goto(`/w/${slug}/desk`);
      await signOut(page);
      await page.goto(`/w/${slug}/desk`);
      await page.waitForURL(/\/sign-in/);
    });
  }
});

describe("inviting a colleague", () => {
  it("a manager invites by e-mail; the captured mail's link creates the account; the link then stops working", async () => {
    session = await openBrowser();
    const { page } = session;
    const manager = account("manager");
    const invitee = uniqueAddress("colleague");

    await signIn(page, manager.email, manager.password);
    await page.waitForURL(/\/desk$/);
    await page.locator('nav[aria-label="Workspace"]').getByRole("link", { name: "Team" }).click();
    await page.waitForURL(/\/team$/);
    await page.getByLabel("E-mail address").fill(invitee);
    await page.getByLabel("Role", { exact: true }).selectOption("economist");
    await page.getByRole("button", { name: "Send invitation" }).click();
    await page.getByText(`Invitation queued for ${invitee}`).waitFor();
    await page.getByTestId("pending-invitations").getByText(invitee).waitFor();
    await page.getByTestId("audit-trail").getByText(invitee).first().waitFor();
    await screenshot(page, "team-manager");

    // The worker sends the mail; poll the Outbox until it shows up.
    await page.locator('nav[aria-label="Workspace"]').getByRole("link", { name: "Outbox" }).click();
    const entry = page.getByRole("link", { name: new RegExp(invitee.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")) });
    for (let i = 0; i < 40 && !(await entry.isVisible()); i++) {
      await page.waitForTimeout(500);
      await page.reload();
    }
    await entry.click();
    await page.getByTestId("mail-to").getByText(invitee).waitFor();
    const text = await page.getByTestId("mail-text").innerText();
    const link = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]{43}/.exec(text)?.[0];
    expect(link).toBeDefined();
    expect(await page.getByTestId("mail-html").getAttribute("sandbox")).toBe("");
    await screenshot(page, "outbox-message");
    await signOut(page);

    await page.goto(link!);
    expect(await page.getByTestId("invitation-workspace").innerText()).toBe(demo.workspace.name);
    expect(await page.getByTestId("invitation-role").innerText()).toBe("Economist");
    await page.getByLabel("Your name").fill("Marit Vossenberg");
    await page.getByLabel("Password", { exact: true }).fill("a long new password");
    await page.getByLabel("Password again").fill("a long new password");
    await screenshot(page, "invitation-accept");
    await page.getByRole("button", { name: "Create account and join" }).click();
    await page.waitForURL(new RegExp(`/w/${slug}/desk$`));
    expect(await page.getByTestId("user-name").innerText()).toBe("Marit Vossenberg");
    expect(await page.getByTestId("desk-role").innerText()).toBe("Economist");
    expect(await navLabels(page)).toEqual(EXPECTED_NAV.economist);
    await signOut(page);

    await page.goto(link!);
    expect(await page.getByTestId("invitation-problem").innerText()).toContain("already been used");

    // The manager sees the acceptance in the audit trail.
    await signIn(page, manager.email, manager.password);
    await page.waitForURL(/\/desk$/);
    await page.goto(`/w/${slug}/team`);
    await page.getByTestId(`member-${invitee}`).waitFor();
    await page.getByTestId("audit-trail").getByText("Invitation accepted").first().waitFor();
  });
});

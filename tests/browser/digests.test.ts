import type { Page } from "playwright-core";
import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { runParamsInputSchema } from "@/lib/runs/schemas";
import { startRun } from "@/lib/runs/service";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { loadVeldmarkPanel } from "@/tests/integration/runs/fixtures";

// Issue 6 "done when": a browser test sets up a subscription and opens a
// captured digest. The demo subscriber subscribes to one indicator on the
// Digests screen and asks for the digest now; the demo manager finds it in the
// Outbox and reads it (subject, the chosen indicator only, the unsubscribe link).

const slug = demo.workspace.slug;
const subscriber = demo.accounts.find((a) => a.role === "subscriber");
const manager = demo.accounts.find((a) => a.role === "manager");
if (!subscriber || !manager) throw new Error("demo-accounts.json needs a subscriber and a manager");

let session: BrowserSession;


async function signOut(page: Page) {
  await page.getByRole("button", { name: "Sign out" }).click();
  await page.waitForURL(/\/sign-in/);
}

async function waitForRun(id: number, timeoutMs: number): Promise<string> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const [run] = await db().query<{ state: string }>("SELECT state FROM runs WHERE id = $1", { bind: [id], type: QueryTypes.SELECT });
    const state = run?.state ?? "missing";
    if (state !== "queued" && state !== "running") return state;
    if (Date.now() > deadline) return `still ${state} after ${timeoutMs / 1000} s`;
    await new Promise((resolve) => setTimeout(resolve, 1_000));
  }
}

beforeAll(async () => {
  testServices();
  const [ws] = await db().query<{ id: number }>("SELECT id FROM workspaces WHERE slug = $1", { bind: [slug], type: QueryTypes.SELECT });
  if (!ws) throw new Error(`The demo workspace "${slug}" is missing: the demo seeder has not run.`);
  // A panel of its own (the Veldmark data, two indicators) so that no earlier run
  // on the same panel exists: the subscriber's first digest then reports every
  // significant result as new, whatever other tests ran before.
  const { panelVersionId } = await loadVeldmarkPanel(ws.id, { indicators: ["unemployment_rate", "broadband_coverage"] });
  // A completed run of two indicators (the worker computes it), so the digest has results to report.
  const choice = runParamsInputSchema.parse({ seed: 20260101, permutations: 199, indicators: ["unemployment_rate", "broadband_coverage"] });
  const { runId } = await startRun({ workspaceId: ws.id, userId: null, panelVersionId, choice });
  expect(await waitForRun(runId, 240_000)).toBe("completed");
  session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
}, 300_000);

afterAll(async () => {
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(600_000);

it("the demo subscriber subscribes to one indicator and asks for the digest now; the manager opens it in the Outbox", async () => {
  const { page } = session;
  await signIn(page, subscriber.email, subscriber.password);
  await page.goto(`/w/${slug}/digests`);
  const form = page.getByRole("form", { name: "Digest subscription" });
  await form.waitFor();
  await page.getByText("You do not receive digests from this workspace yet.").waitFor();
  await screenshot(page, "digests-01-not-subscribed");

  await form.getByRole("radio", { name: "Weekly (Mondays)" }).check();
  await form.getByRole("radio", { name: "Only the ones I choose" }).check();
  await form.getByRole("checkbox", { name: "Unemployment rate", exact: true }).check();
  await form.getByLabel("What counts as news").selectOption("class_changes");
  await screenshot(page, "digests-02-form-filled");
  await form.getByRole("button", { name: "Save subscription" }).click();
  await form.getByRole("status").filter({ hasText: "Saved." }).waitFor();

  // Saved: the screen now shows the subscription, a preview of the next digest and the (empty) history.
  await page.getByText("Active. No digest sent yet.").waitFor();
  await page.getByText("Subject:").waitFor({ timeout: 60_000 });
  expect(await form.getByRole("radio", { name: "Weekly (Mondays)" }).isChecked()).toBe(true);
  expect(await form.getByRole("checkbox", { name: "Unemployment rate", exact: true }).isChecked()).toBe(true);
  expect(await form.getByRole("checkbox", { name: "Broadband coverage", exact: true }).isChecked()).toBe(false);
  const previewSubject = await page.locator("section[aria-labelledby='preview'] p").filter({ hasText: "Subject:" }).innerText();
  expect(previewSubject).toContain("Tessera digest");
  await page.getByText("No digests yet.").waitFor();
  await screenshot(page, "digests-03-saved-with-preview");

  await form.getByRole("button", { name: "Send me this digest now" }).click();
  // The answer says on the screen what happens: queued to this address under this subject (or why not).
  const outcome = form.getByTestId("digest-send-outcome");
  await outcome.waitFor();
  expect(await outcome.getAttribute("data-status")).toBe("queued");
  expect(await outcome.innerText()).toMatch(new RegExp(`^On its way to ${subscriber.email.replace(/[.+]/g, "\\$&")}: “Tessera digest`));
  // The worker sends it; the delivery history shows it as sent.
  const sentRow = page.locator("section[aria-labelledby='history'] tbody tr").filter({ hasText: "sent" });
  for (let i = 0; i < 60 && !(await sentRow.first().isVisible()); i++) {
    await page.waitForTimeout(1_000);
    await page.reload();
    await form.waitFor();
  }
  await sentRow.first().waitFor({ timeout: 5_000 });
  await page.getByText(/^Active\. Last digest: /).waitFor();
  expect(await sentRow.first().innerText()).toContain("on request");
  // Everything in scope was just reported and the subscriber chose "Send nothing" for empty digests: the preview says so.
  await page.getByTestId("digest-preview-skipped").waitFor();
  await screenshot(page, "digests-04-delivery-sent");
  await signOut(page);

  // The manager sees who subscribes, then opens the captured digest in the Outbox.
  await signIn(page, manager.email, manager.password);
  await page.goto(`/w/${slug}/digests`);
  const subscribers = page.locator("section[aria-labelledby='subscribers']");
  const row = subscribers.locator("tbody tr").filter({ hasText: subscriber.email });
  await row.waitFor();
  expect(await row.innerText()).toMatch(/Weekly \(Mondays\)[\s\S]*Unemployment rate[\s\S]*Only changes in significance class[\s\S]*active/);
  await screenshot(page, "digests-05-manager-subscribers");

  await page.locator('nav[aria-label="Workspace"]').getByRole("link", { name: "Outbox" }).click();
  await page.getByRole("heading", { name: "Outbox" }).waitFor();
  const entry = page.getByRole("link").filter({ hasText: `to ${subscriber.email}` }).filter({ hasText: "Tessera digest" });
  for (let i = 0; i < 40 && !(await entry.first().isVisible()); i++) {
    await page.waitForTimeout(500);
    await page.reload();
  }
  await entry.first().click();
  await page.getByTestId("mail-to").getByText(subscriber.email).waitFor();
  const subject = await page.getByRole("heading", { level: 1 }).innerText();
  expect(subject).toContain("Tessera digest");
  expect(subject).toContain(demo.workspace.name);
  expect(subject).not.toContain("nothing changed");
  const text = await page.getByTestId("mail-text").innerText();
  expect(text).toContain(`Tessera digest for ${subscriber.name}`);
  expect(text).toContain("Unemployment rate");
  expect(text).not.toContain("Broadband coverage");
  expect(text).toContain(`/w/${slug}/timeline?indicator=unemployment_rate`);
  expect(text).toMatch(/\/api\/digests\/unsubscribe\?token=[\w%.-]+/);
  const html = page.frameLocator('[data-testid="mail-html"]');
  await html.getByText("Unemployment rate").first().waitFor();
  expect(await html.locator("svg").count()).toBeGreaterThan(0);
  expect(await html.locator('a[href*="/api/digests/unsubscribe?token="]').count()).toBeGreaterThan(0);
  await screenshot(page, "digests-06-outbox-digest");
});

import { QueryTypes } from "sequelize";
import demo from "@/seeders/demo-accounts.json";
import { db } from "@/lib/db";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { signIn } from "@/tests/helpers/sign-in";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";

// The rate editor in Intake: a steward declares an indicator of the demo panel a rate of two
// others, sees the declaration saved (after a reload too, and in the indicators table), and
// takes it back. The demo workspace is shared by the browser tests, so the declaration is
// removed at the end whatever happens.

const slug = demo.workspace.slug;
const steward = demo.accounts.find((a) => a.role === "steward");
if (!steward) throw new Error("demo-accounts.json has no steward");
const CODE = "business_births_per_1000";
const EVENTS = "business_closures";
const POPULATION = "working_age_population";

let session: BrowserSession;

async function storedRate(): Promise<{ events: string | null; population: string | null; multiplier: number | null }> {
  const [row] = await db().query<{ events: string | null; population: string | null; multiplier: number | null }>(
    `SELECT i.rate_events_code AS events, i.rate_population_code AS population, i.rate_multiplier AS multiplier
       FROM indicators i JOIN workspaces w ON w.id = i.workspace_id WHERE w.slug = $1 AND i.code = $2`,
    { bind: [slug, CODE], type: QueryTypes.SELECT },
  );
  if (!row) throw new Error(`the demo workspace has no indicator ${CODE}`);
  return row;
}

beforeAll(async () => {
  testServices();
  expect((await storedRate()).events).toBeNull();
  session = await openBrowser({ viewport: { width: 1280, height: 1000 } });
  session.page.setDefaultTimeout(120_000);
});

afterAll(async () => {
  await db()
    .query(
      `UPDATE indicators SET rate_events_code = NULL, rate_population_code = NULL, rate_multiplier = NULL
        WHERE code = $2 AND workspace_id = (SELECT id FROM workspaces WHERE slug = $1)`,
      { bind: [slug, CODE] },
    )
    .catch(() => undefined);
  await session?.close();
  await closeIntakePool();
  await closeConnections();
});

jest.setTimeout(300_000);

it("a steward declares a rate in the indicator editor, sees it saved, and takes it back", async () => {
  const { page } = session;
  await signIn(page, steward.email, steward.password);
  await page.goto(`/w/${slug}/intake`);
  const item = page.getByTestId("indicators").locator("li", { hasText: CODE });
  // Only one indicator is edited at a time; its form replaces the line that named the code.
  const form = page.getByTestId("indicators").locator("form");
  await item.getByRole("button", { name: "Edit" }).click();
  await form.getByRole("checkbox", { name: /^This indicator is a rate/ }).check();
  // Each select sits inside its label, so its name starts with the label's word.
  await form.getByRole("combobox", { name: /^Events/ }).selectOption(EVENTS);
  await form.getByRole("combobox", { name: /^Population/ }).selectOption(POPULATION);
  await form.getByRole("combobox", { name: /^Multiplier/ }).selectOption("1000");
  await form.getByRole("button", { name: "Save" }).click();

  const line = page.getByTestId(`rate-${CODE}`);
  await expect(line.innerText()).resolves.toBe(`Rate: ${EVENTS} / ${POPULATION} × 1,000 (per 1,000)`);
  expect(await storedRate()).toEqual({ events: EVENTS, population: POPULATION, multiplier: 1000 });
  await screenshot(page, "intake-rate-declared");

  await page.reload();
  await expect(page.getByTestId(`rate-${CODE}`).innerText()).resolves.toBe(`Rate: ${EVENTS} / ${POPULATION} × 1,000 (per 1,000)`);

  // Taken back: the line goes, and so does the stored declaration.
  await item.getByRole("button", { name: "Edit" }).click();
  await form.getByRole("checkbox", { name: /^This indicator is a rate/ }).uncheck();
  await form.getByRole("button", { name: "Save" }).click();
  // Saved when the form closes and the indicator's line is back, without its rate.
  await form.waitFor({ state: "detached" });
  await item.getByRole("button", { name: "Edit" }).waitFor();
  expect(await page.getByTestId(`rate-${CODE}`).count()).toBe(0);
  expect((await storedRate()).events).toBeNull();
});

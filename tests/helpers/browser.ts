import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type Browser, type BrowserContext, type Page } from "playwright-core";
import { testServices } from "@/tests/helpers/env";

const CHROMIUM = "/usr/bin/chromium";
const ARGS = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export type BrowserSession = { browser: Browser | null; context: BrowserContext; page: Page; close: () => Promise<void> };

/**
 * Debian's chromium with a fresh profile (scripts/test.mjs installs it when
 * missing). The page's baseURL is the test app (NEXTAUTH_URL), so
 * `page.goto("/sign-in")` works.
 */
export async function openBrowser(options: { viewport?: { width: number; height: number } } = {}): Promise<BrowserSession> {
  if (!fs.existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium) or run \`npm test\`, which does.`);
  const { appUrl } = testServices();
  const userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), "tessera-chromium-"));
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath: CHROMIUM,
    headless: true,
    args: ARGS,
    baseURL: appUrl,
    viewport: options.viewport ?? { width: 1280, height: 900 },
    reducedMotion: "reduce",
  });
  const page = context.pages()[0] ?? (await context.newPage());
  return {
    browser: context.browser(),
    context,
    page,
    close: async () => {
      await context.close().catch(() => undefined);
      fs.rmSync(userDataDir, { recursive: true, force: true });
    },
  };
}

/** Saves a screenshot under tests/browser/screenshots/ (git-ignored) and returns its path. */
export async function screenshot(page: Page, name: string): Promise<string> {
  const dir = path.join(process.cwd(), "tests", "browser", "screenshots");
  fs.mkdirSync(dir, { recursive: true });
  const file = path.join(dir, `${name.replace(/[^\w.-]+/g, "-")}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

import { createServer } from "node:http";
import type { AddressInfo } from "node:net";
import type { Page } from "playwright-core";
import demo from "@/seeders/demo-accounts.json";
import { openBrowser, screenshot, type BrowserSession } from "@/tests/helpers/browser";
import { SIGN_IN_MESSAGES } from "@/lib/auth/messages";
import { MAX_FAILURES_PER_EMAIL } from "@/lib/auth/throttle";
import { testServices, uniqueAddress } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";
import { PASSWORD, makeUser } from "@/tests/integration/auth/fixtures";
import { watchSecurity } from "./security-watch";

// The security headers as a browser meets them on the running app (next start):
// the Content-Security-Policy is satisfied by every screen of the demo
// workspace (no violation event, no CSP console error), it and the other
// headers are on pages, API answers, redirects and static files, framing is
// refused, and the session cookie a real sign-in sets carries the right flags.

jest.setTimeout(600_000);

const slug = demo.workspace.slug;
const manager = demo.accounts.find((a) => a.role === "manager");
if (!manager) throw new Error("demo-accounts.json has no manager");

function header(headers: Record<string, string>, name: string): string {
  return headers[name.toLowerCase()] ?? "";
}

const STATIC_HEADERS: [string, RegExp][] = [
  ["x-content-type-options", /^nosniff$/],
  ["x-frame-options", /^DENY$/],
  ["referrer-policy", /^(strict-origin-when-cross-origin|strict-origin|same-origin|no-referrer)$/],
  ["permissions-policy", /camera=\(\).*microphone=\(\)/],
  ["cross-origin-opener-policy", /^same-origin$/],
];

/** Answers that depend on who is signed in may be kept by no cache (Next.js adds its own words to pages' value). */
function expectNoStore(headers: Record<string, string>, where: string) {
  const value = header(headers, "cache-control");
  if (!/(^|,)\s*no-store\s*(,|$)/.test(value)) throw new Error(`${where}: cache-control is "${value}", expected no-store`);
}

function expectStaticHeaders(headers: Record<string, string>, where: string) {
  for (const [name, pattern] of STATIC_HEADERS) {
    if (!pattern.test(header(headers, name))) throw new Error(`${where}: header ${name} is "${header(headers, name)}", expected ${pattern}`);
  }
}

function expectPagePolicy(headers: Record<string, string>, where: string): string {
  const csp = header(headers, "content-security-policy");
  expect({ where, csp }).toEqual({ where, csp: expect.stringMatching(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+' 'strict-dynamic'/) });
  expect({ where, csp }).toEqual({ where, csp: expect.stringContaining("frame-ancestors 'none'") });
  expect({ where, csp }).toEqual({ where, csp: expect.not.stringMatching(/script-src[^;]*'unsafe-(inline|eval)'/) });
  return /'nonce-([^']+)'/.exec(csp)?.[1] ?? "";
}

async function signIn(page: Page) {
  await page.goto("/sign-in");
  await page.getByLabel("E-mail address").fill(manager!.email);
  await page.getByLabel("Password").fill(manager!.password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((url) => !url.pathname.startsWith("/sign-in"));
}

let session: BrowserSession;

beforeAll(() => {
  testServices();
});
afterEach(async () => {
  await session?.close();
});
afterAll(async () => {
  await closeConnections();
});

describe("security headers on the running app", () => {
  it("puts a fresh-nonce CSP and the fixed headers on a page, and every script of the page carries that nonce", async () => {
    session = await openBrowser();
    const first = await session.page.goto("/sign-in");
    expect(first?.status()).toBe(200);
    const headers = first!.headers();
    expectStaticHeaders(headers, "GET /sign-in");
    const nonce = expectPagePolicy(headers, "GET /sign-in");
    const html = await first!.text();
    const scripts = html.match(/<script\b[^>]*>/g) ?? [];
    expect(scripts.length).toBeGreaterThan(0);
    const withoutNonce = scripts.filter((tag) => !tag.includes(`nonce="${nonce}"`));
    expect(withoutNonce).toEqual([]);

    const second = await session.page.goto("/sign-in");
    const secondNonce = expectPagePolicy(second!.headers(), "GET /sign-in again");
    expect(secondNonce).not.toBe(nonce);
  });

  it("puts them on API answers (200 and 401), on signed-in pages, on every kind of redirect and on static files", async () => {
    const { appUrl } = testServices();
    session = await openBrowser();
    await signIn(session.page);

    const api = await session.context.request.get(`/api/w/${slug}/catalogue`);
    expect(api.status()).toBe(200);
    expectStaticHeaders(api.headers(), "GET catalogue API (signed in)");
    expectPagePolicy(api.headers(), "GET catalogue API (signed in)");
    expectNoStore(api.headers(), "GET catalogue API (signed in)");

    const signedInPage = await session.context.request.get(`/w/${slug}/desk`);
    expect(signedInPage.status()).toBe(200);
    expectStaticHeaders(signedInPage.headers(), "GET desk page (signed in)");
    expectPagePolicy(signedInPage.headers(), "GET desk page (signed in)");
    expectNoStore(signedInPage.headers(), "GET desk page (signed in)");

    const anonymous = await fetch(`${appUrl}/api/w/${slug}/catalogue`);
    expect(anonymous.status).toBe(401);
    expectStaticHeaders(Object.fromEntries(anonymous.headers), "GET catalogue API (signed out)");
    expectPagePolicy(Object.fromEntries(anonymous.headers), "GET catalogue API (signed out)");
    expectNoStore(Object.fromEntries(anonymous.headers), "GET catalogue API (signed out)");

    const redirect = await fetch(`${appUrl}/w/${slug}/desk`, { redirect: "manual" });
    expect(redirect.status).toBe(307);
    expect(redirect.headers.get("location")).toMatch(/\/sign-in\?callbackUrl=/);
    expectStaticHeaders(Object.fromEntries(redirect.headers), "redirect of a signed-out visitor");
    expectPagePolicy(Object.fromEntries(redirect.headers), "redirect of a signed-out visitor");
    expectNoStore(Object.fromEntries(redirect.headers), "redirect of a signed-out visitor");

    // The trailing-slash 308 is answered by proxy.ts (skipTrailingSlashRedirect), with a path-only Location.
    const slash = await fetch(`${appUrl}/w/${slug}/desk/`, { redirect: "manual" });
    expect(slash.status).toBe(308);
    expect(slash.headers.get("location")).toBe(`/w/${slug}/desk`);
    expectStaticHeaders(Object.fromEntries(slash.headers), "trailing-slash redirect");
    expectPagePolicy(Object.fromEntries(slash.headers), "trailing-slash redirect");
    expectNoStore(Object.fromEntries(slash.headers), "trailing-slash redirect");

    // next-auth's own sign-in endpoint redirects to Tessera's sign-in page.
    const authRedirect = await fetch(`${appUrl}/api/auth/signin`, { redirect: "manual" });
    expect(authRedirect.status).toBeGreaterThanOrEqual(300);
    expect(authRedirect.status).toBeLessThan(400);
    expect(authRedirect.headers.get("location")).toMatch(/\/sign-in/);
    expectStaticHeaders(Object.fromEntries(authRedirect.headers), "next-auth redirect");
    expectPagePolicy(Object.fromEntries(authRedirect.headers), "next-auth redirect");
    expectNoStore(Object.fromEntries(authRedirect.headers), "next-auth redirect");

    const page = await fetch(`${appUrl}/sign-in`);
    const script = /<script[^>]+src="(\/_next\/static\/[^"]+\.js)"/.exec(await page.text())?.[1];
    expect(script).toBeDefined();
    const asset = await fetch(`${appUrl}${script}`);
    expect(asset.status).toBe(200);
    expectStaticHeaders(Object.fromEntries(asset.headers), `GET ${script}`);
    expect(asset.headers.get("content-security-policy")).toBe("default-src 'none'; frame-ancestors 'none'");
  });

  it("sets the session cookie HttpOnly and SameSite=Lax on a real sign-in, out of reach of page scripts", async () => {
    session = await openBrowser();
    await signIn(session.page);
    const cookies = await session.context.cookies();
    const sessionCookie = cookies.find((c) => /next-auth\.session-token$/.test(c.name));
    expect(sessionCookie).toBeDefined();
    expect(sessionCookie).toEqual(expect.objectContaining({ name: "next-auth.session-token", httpOnly: true, sameSite: "Lax", path: "/" }));
    // The test app is plain http, so not Secure here; tests/unit/security/auth-cookies.test.ts holds the https case.
    expect(sessionCookie?.secure).toBe(false);
    expect(await session.page.evaluate(() => document.cookie)).not.toContain("session-token");
  });

  it(`refuses the right password after ${MAX_FAILURES_PER_EMAIL} wrong ones in a browser that never signed in as that address, and the form says why`, async () => {
    const user = await makeUser("browser-guessed");
    // A fresh browser has no device cookie for this address, so it is an untrusted
    // client: the wrong guesses lock it out (lib/auth/throttle.ts). A browser holding
    // the owner's device cookie would still sign in; tests/integration/security/hostile-sign-in.test.ts holds that.
    session = await openBrowser();
    const { page, context } = session;
    // An address of its own (a documentation range), so this test's failures do not count
    // against 127.0.0.1, which every other browser test signs in from.
    await context.setExtraHTTPHeaders({ "X-Forwarded-For": `203.0.113.${1 + Math.floor(Math.random() * 250)}` });
    const alert = page.locator('form [role="alert"]');
    const attempt = async (password: string) => {
      await page.goto("/sign-in");
      await page.getByLabel("E-mail address").fill(user.email);
      await page.getByLabel("Password").fill(password);
      await page.getByRole("button", { name: "Sign in" }).click();
      await alert.waitFor();
      return alert.innerText();
    };
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) expect(await attempt(`wrong guess ${i}`)).toBe(SIGN_IN_MESSAGES.invalid);
    expect(await attempt(PASSWORD)).toBe(SIGN_IN_MESSAGES.throttled);
    expect(page.url()).toContain("/sign-in");
    expect((await context.cookies()).some((c) => /session-token/.test(c.name))).toBe(false);
  });

  it("refuses a data-changing API request from another origin's page, which the SameSite=Lax cookie alone would let through", async () => {
    const { appUrl } = testServices();
    session = await openBrowser();
    const { page, context } = session;
    await signIn(page);
    // Another port of the same host is another origin but the same site, so the
    // browser sends the Lax session cookie with its POST: only the origin check
    // stops it. A text/plain body needs no CORS preflight.
    const victim = `${uniqueAddress("csrf-victim")}`;
    const attacker = createServer((_req, res) => {
      res.writeHead(200, { "content-type": "text/html" });
      res.end(`<!doctype html><title>elsewhere</title><script>
        fetch(${JSON.stringify(`${appUrl}/api/w/${slug}/invitations`)}, {
          method: "POST", mode: "no-cors", credentials: "include",
          headers: { "content-type": "text/plain" },
          body: JSON.stringify({ email: ${JSON.stringify(victim)}, role: "manager" }),
        }).then(() => { document.title = "sent"; }, () => { document.title = "failed"; });
      </script>`);
    });
    await new Promise<void>((resolve) => attacker.listen(0, "127.0.0.1", resolve));
    const refusals: number[] = [];
    page.on("response", (r) => {
      if (r.url().endsWith("/invitations") && r.request().method() === "POST") refusals.push(r.status());
    });
    try {
      const port = (attacker.address() as AddressInfo).port;
      await page.goto(`http://127.0.0.1:${port}/`);
      await waitFor("the other page's request to be answered", async () => refusals.length > 0 && (await page.title()) !== "elsewhere", { timeoutMs: 15_000 });
      expect(refusals).toEqual([403]);
    } finally {
      // The browser keeps its connection to the other page open; without this, close() waits for it.
      attacker.closeAllConnections();
      await new Promise((resolve) => attacker.close(resolve));
    }
    const pending = await context.request.get(`/api/w/${slug}/invitations`);
    const emails = ((await pending.json()) as { invitations: { email: string }[] }).invitations.map((i) => i.email);
    expect(emails).not.toContain(victim);

    // A request that claims another origin is refused whatever sends it.
    const direct = await context.request.post(`/api/w/${slug}/invitations`, {
      headers: { origin: "https://attacker.example", "content-type": "application/json" },
      data: { email: victim, role: "manager" },
    });
    expect(direct.status()).toBe(403);
    expect(((await direct.json()) as { error: string }).error).toMatch(/came from another site \(Origin: https:\/\/attacker\.example\)/);
    // The same request from Tessera's own page goes through to its handler.
    await page.goto("/sign-in");
    const own = await page.evaluate(
      async ([url, email]) => (await fetch(url, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify({ email, role: "subscriber" }) })).status,
      [`/api/w/${slug}/invitations`, victim] as const,
    );
    expect(own).toBe(201);
  });

  it("refuses to be framed by another page", async () => {
    const { appUrl } = testServices();
    session = await openBrowser();
    const { page } = session;
    const refused: string[] = [];
    page.on("console", (msg) => {
      if (/frame-ancestors|X-Frame-Options/i.test(msg.text())) refused.push(msg.text());
    });
    await page.setContent(`<iframe id="victim" src="${appUrl}/sign-in" width="600" height="400"></iframe>`);
    await waitFor("the browser to refuse the frame", async () => refused.length > 0, { timeoutMs: 15_000 });
    expect(refused.join("\n")).toMatch(/frame-ancestors 'none'|X-Frame-Options/);
    const framed = page.frames().find((f) => f.url().includes("/sign-in"));
    const heading = framed ? await framed.locator("h1").count().catch(() => 0) : 0;
    expect(heading).toBe(0);
  });
});

describe("the Content-Security-Policy holds on every screen", () => {
  it("a manager walks through every screen of the demo workspace, the sign-in and an invitation page without one violation", async () => {
    session = await openBrowser({ viewport: { width: 1440, height: 1000 } });
    const { page, context } = session;
    page.setDefaultTimeout(120_000);
    const csp = await watchSecurity(context, page);
    const settle = () => page.waitForTimeout(750);

    csp.at("sign-in");
    await page.goto("/sign-in");
    await page.getByRole("button", { name: "Sign in" }).waitFor();
    await signIn(page);

    csp.at("Desk");
    await page.goto(`/w/${slug}/desk`);
    await page.getByTestId("desk-analyses").waitFor();
    await settle();

    csp.at("Catalogue");
    await page.goto(`/w/${slug}/catalogue`);
    await page.locator(".ag-row").first().waitFor();
    await page.locator(".ag-row").first().hover();
    await settle();

    csp.at("Indicator timeline");
    await page.goto(`/w/${slug}/timeline?indicator=unemployment_rate`);
    await page.locator('[data-testid="timeline-moran"] svg').waitFor();
    await page.locator('[data-testid="timeline-robustness"] svg').waitFor({ timeout: 60_000 });
    const chart = page.locator('[data-testid="timeline-moran"]');
    const box = await chart.boundingBox();
    if (box) await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await settle();

    csp.at("Region map");
    await page.goto(`/w/${slug}/map?indicator=unemployment_rate`);
    await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().waitFor();
    await page.locator('[data-testid="cluster-map-a"] path[data-region]').first().hover();
    await page.getByTestId("region-detail").waitFor();
    const scatter = page.locator('[data-testid="scatter-a"] svg path').first();
    if (await scatter.count()) await scatter.hover({ force: true }).catch(() => undefined);
    await settle();

    csp.at("Compare");
    await page.goto(`/w/${slug}/compare?indicator=unemployment_rate`);
    await page.getByTestId("compare-change-i").waitFor();
    await settle();

    csp.at("Intake");
    await page.goto(`/w/${slug}/intake`);
    await page.getByTestId("upload-wizard").waitFor();
    await settle();

    csp.at("Intake panel version");
    await page.locator('[data-testid^="panel-version-"] a').first().click();
    await page.waitForURL(/\/intake\/panels\/\d+$/);
    await page.getByTestId("version-state").waitFor();
    await settle();

    csp.at("Intake boundary version");
    await page.goto(`/w/${slug}/intake`);
    await page.locator('[data-testid^="boundaries-version-"] a').first().click();
    await page.waitForURL(/\/intake\/boundaries\/\d+$/);
    await page.getByTestId("boundary-map").locator("path").first().waitFor();
    await settle();

    csp.at("Runs");
    await page.goto(`/w/${slug}/runs`);
    await page.getByTestId("runs-list").waitFor();
    await settle();

    csp.at("Digests (with preview)");
    await page.goto(`/w/${slug}/digests`);
    const form = page.getByRole("form", { name: "Digest subscription" });
    await form.waitFor();
    await form.getByRole("button", { name: "Save subscription" }).click();
    await page.locator('iframe[title="Digest preview"], [data-testid="digest-preview-skipped"]').first().waitFor();
    await settle();

    csp.at("Team (invite)");
    const invitee = uniqueAddress("csp-invitee");
    await page.goto(`/w/${slug}/team`);
    await page.getByLabel("E-mail address").fill(invitee);
    await page.getByLabel("Role", { exact: true }).selectOption("subscriber");
    await page.getByRole("button", { name: "Send invitation" }).click();
    await page.getByTestId("pending-invitations").getByText(invitee).waitFor();
    await page.getByTestId("audit-trail").waitFor();
    await settle();

    csp.at("Outbox");
    await page.goto(`/w/${slug}/outbox`);
    const entry = page.getByRole("link", { name: new RegExp(invitee.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")) });
    await waitFor(`the invitation to ${invitee} in the Outbox`, async () => {
      await page.reload();
      return (await entry.count()) > 0;
    }, { timeoutMs: 60_000, intervalMs: 1_000 });
    await settle();

    csp.at("Outbox message");
    await entry.first().click();
    await page.getByTestId("mail-html").waitFor();
    const link = /https?:\/\/\S+\/invite\/[A-Za-z0-9_-]+/.exec(await page.getByTestId("mail-text").innerText())?.[0];
    expect(link).toBeDefined();
    await settle();

    csp.at("Not found");
    await page.goto(`/w/${slug}/no-such-screen`);
    await settle();

    csp.at("sign-out");
    await page.getByRole("button", { name: "Sign out" }).first().click().catch(() => undefined);
    await context.clearCookies();

    csp.at("Invitation");
    await page.goto(new URL(link!).pathname);
    await page.getByTestId("invitation-role").waitFor();
    await settle();

    csp.at("Unsubscribe page (route handler HTML)");
    await page.goto("/api/digests/unsubscribe?token=not-a-real-token");
    await page.locator("h1").waitFor();
    await settle();

    csp.at("sign-in (signed out)");
    await page.goto("/sign-in");
    await page.getByRole("button", { name: "Sign in" }).waitFor();
    await settle();
    await screenshot(page, "security-csp-sign-in");

    csp.assertClean();
    expect(csp.violations).toEqual([]);
  });
});

import { readdirSync, type Dirent } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import { getSessionUser, type SessionUser } from "@/lib/auth/session";
import { db } from "@/lib/db";
import { deliverDigest } from "@/lib/digests/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { listCapturedMail } from "@/lib/mail/outbox";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { PASSWORD } from "@/tests/integration/auth/fixtures";
import { buildTenancyWorld, leaksOf, type TenancyWorld, type WorkspaceB } from "@/tests/integration/security/fixtures-tenancy";
import { MEMBER_ROLES, subscriptionFor, validatedBoundaries, type MemberRole } from "@/tests/integration/security/fixtures-world";
import { authorizeMember } from "@/lib/auth/guard";
import { deriveCrosswalkFor } from "@/lib/reforms/service";

// Tenancy proven on pages (docs/guarantees.md, "No one reads another team's data"): every page under app/(app),
// found on disk, fetched over HTTP from the running app after a real
// credentials sign-in as each role of workspace A. No page's HTML (with the
// React payload it carries) may contain any of workspace B's strings or row
// ids, and B's pages are 404 for A's members. B is built as in
// tenancy-routes.test.ts: created through POST /api/workspaces and filled
// through the route handlers, called in this process with the session stood
// in for; the app under test uses real sessions only.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(600_000);

const ROOT = process.cwd();
let world: TenancyWorld;
let appUrl: string;
let outboxMailOfA: number;
let crosswalkOfA: number;

function signInAs(user: { id: number; email: string; name: string } | null): void {
  sessionMock.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}

/** Every page file under app/(app), as its route ("/w/[slug]/intake/panels/[versionId]"). */
function pageRoutes(): string[] {
  const dir = path.join(ROOT, "app", "(app)");
  return (readdirSync(dir, { recursive: true, withFileTypes: true }) as Dirent[])
    .filter((e) => e.isFile() && /^page\.(tsx|ts|jsx|js)$/.test(e.name))
    .map((e) => `/${path.relative(dir, e.parentPath).split(path.sep).join("/")}`.replace(/\/$/, "").replace(/\/\([^)]+\)/g, "") || "/")
    .sort();
}

type Fillers = { slug: string; boundaryVersionId: number; panelVersionId: number; mailId: number; crosswalkId: number };

/** The route with its dynamic segments filled from `f`; throws for a segment this test does not know yet. */
function fill(route: string, f: Fillers): string {
  return route.replace(/\[(\w+)\]/g, (_, name: string) => {
    if (name === "slug") return f.slug;
    if (name === "versionId") return String(route.includes("/boundaries/") ? f.boundaryVersionId : f.panelVersionId);
    if (name === "id" && route.includes("/outbox/")) return String(f.mailId);
    if (name === "crosswalkId") return String(f.crosswalkId);
    throw new Error(`tenancy-pages.test.ts does not know how to fill [${name}] in ${route}: add it to fill()`);
  });
}

/** Cookies from Set-Cookie lines merged into a jar. */
function absorb(jar: Map<string, string>, response: Response): void {
  for (const line of response.headers.getSetCookie()) {
    const [pair] = line.split(";");
    const at = pair.indexOf("=");
    jar.set(pair.slice(0, at), pair.slice(at + 1));
  }
}
const cookieHeader = (jar: Map<string, string>) => [...jar].map(([k, v]) => `${k}=${v}`).join("; ");

/** A real sign-in through next-auth's credentials endpoint; returns the cookie jar holding the session. */
async function signInOverHttp(email: string): Promise<Map<string, string>> {
  const jar = new Map<string, string>();
  const csrf = await fetch(`${appUrl}/api/auth/csrf`);
  absorb(jar, csrf);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const response = await fetch(`${appUrl}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: cookieHeader(jar), origin: appUrl },
    body: new URLSearchParams({ csrfToken, email, password: PASSWORD, json: "true", callbackUrl: `${appUrl}/` }).toString(),
  });
  absorb(jar, response);
  if (![...jar.keys()].some((k) => k.endsWith("next-auth.session-token"))) {
    throw new Error(`signing in ${email} over HTTP set no session cookie (status ${response.status}): ${(await response.text()).slice(0, 300)}`);
  }
  return jar;
}

async function fetchPage(jar: Map<string, string>, url: string): Promise<{ status: number; body: string; location: string | null }> {
  const response = await fetch(`${appUrl}${url}`, { redirect: "manual", headers: { cookie: cookieHeader(jar) } });
  return { status: response.status, body: await response.text(), location: response.headers.get("location") };
}

/** B's strings and ids in a page: B's ids are numbers of ranges no other row uses, so a bare occurrence in HTML is enough. */
function pageLeaks(html: string, b: WorkspaceB): string[] {
  const found = leaksOf(html, b);
  for (const [table, ids] of Object.entries(b.ids)) {
    for (const id of ids) if (/^\d+$/.test(id) && new RegExp(`(?<![0-9])${id}(?![0-9])`).test(html)) found.push(`id ${id} (a row of B's ${table})`);
  }
  return found;
}

const jars = new Map<MemberRole, Map<string, string>>();

beforeAll(async () => {
  appUrl = testServices().appUrl.replace(/\/+$/, "");
  world = await buildTenancyWorld(signInAs);
  // A crosswalk of A (its districts to a validated copy), for intake/reforms/[crosswalkId].
  const steward = await authorizeMember(world.a.users.steward.id, world.a.workspace.slug, "data.curate");
  crosswalkOfA = (await deriveCrosswalkFor(steward, { fromBoundaryVersionId: world.a.panel.boundaryVersionId, toBoundaryVersionId: await validatedBoundaries(world.a) })).id;
  // A mail of A on A's Outbox, for outbox/[id].
  const subscriptionId = await subscriptionFor(world.a, world.a.users.manager.id);
  await deliverDigest({ subscriptionId, idempotencyKey: `sub-${subscriptionId}:tenancy-pages-${Date.now()}`, runId: null, coverage: "tenancy pages" });
  const listed = await listCapturedMail(world.a.workspace.id, { limit: 1 });
  if (!listed[0]) throw new Error("no mail of A was captured for the Outbox pages");
  outboxMailOfA = listed[0].id;
  for (const role of MEMBER_ROLES) jars.set(role, await signInOverHttp(world.a.users[role].email));
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

const fillersOfA = (): Fillers => ({
  slug: world.a.workspace.slug,
  boundaryVersionId: world.a.panel.boundaryVersionId,
  panelVersionId: world.a.panel.panelVersionId,
  mailId: outboxMailOfA,
  crosswalkId: crosswalkOfA,
});
const fillersOfB = (): Fillers => ({
  slug: world.b.workspace.slug,
  boundaryVersionId: world.b.boundaryVersionId,
  panelVersionId: world.b.panelVersionId,
  mailId: world.b.mailIds[0],
  crosswalkId: world.b.crosswalkId,
});

describe("the pages found on disk", () => {
  it("include every workspace screen this suite must cover", () => {
    const routes = pageRoutes();
    for (const screen of ["/w/[slug]/desk", "/w/[slug]/catalogue", "/w/[slug]/intake", "/w/[slug]/team", "/w/[slug]/outbox", "/w/[slug]/outbox/[id]", "/w/[slug]/intake/panels/[versionId]"]) {
      expect(routes).toContain(screen);
    }
  });
});

describe("the leak check itself", () => {
  it("finds B's strings and ids on B's own pages, signed in as B's manager", async () => {
    const jar = await signInOverHttp(world.b.manager.email);
    for (const screen of ["intake", "team", "outbox"]) {
      const page = await fetchPage(jar, `/w/${world.b.workspace.slug}/${screen}`);
      expect([screen, page.status]).toEqual([screen, 200]);
      expect(pageLeaks(page.body.replaceAll(world.b.workspace.slug, ""), world.b).length).toBeGreaterThan(1);
    }
  });
});

for (const role of MEMBER_ROLES) {
  describe(`A's ${role}`, () => {
    it("sees nothing of B on any page of A (HTML and its React payload), with and without a run chosen", async () => {
      const jar = jars.get(role);
      if (!jar) throw new Error(`no session for ${role}`);
      const query = `?run=${world.a.runId}&indicator=${world.a.indicator}&period=2013&a=2012&b=2014`;
      let shown = 0;
      for (const route of pageRoutes()) {
        for (const search of ["", query]) {
          const url = `${fill(route, fillersOfA())}${search}`;
          const page = await fetchPage(jar, url);
          if (![200, 307, 308, 403, 404].includes(page.status)) throw new Error(`${url} as A's ${role} answered ${page.status}`);
          // The manager holds every capability, so every page of A must render for them (Outbox included: mail goes to the test sink).
          if (role === "manager" && page.status !== 200 && !/^\/w\/\[slug\]$/.test(route)) throw new Error(`${url} as A's manager answered ${page.status}, not 200`);
          if (page.status === 200) shown += 1;
          const leaks = pageLeaks(`${page.location ?? ""}\n${page.body}`, world.b);
          if (leaks.length) throw new Error(`${url} as A's ${role} showed workspace B's data: ${leaks.join("; ")}`);
        }
      }
      expect(shown).toBeGreaterThan(0);
    });

    it("gets 404 for every page of B", async () => {
      const jar = jars.get(role);
      if (!jar) throw new Error(`no session for ${role}`);
      for (const route of pageRoutes().filter((r) => r.startsWith("/w/[slug]"))) {
        const url = fill(route, fillersOfB());
        const page = await fetchPage(jar, url);
        expect([url, page.status]).toEqual([url, 404]);
        // The 404 page may repeat the address A's member typed; apart from that it shows nothing of B.
        let body = page.body;
        const template = route.split("/");
        for (const typed of url.split("/").filter((part, i) => part !== template[i])) body = body.replaceAll(typed, "");
        expect([url, pageLeaks(body, world.b)]).toEqual([url, []]);
      }
    });

    it("sees A's Outbox without any mail of B, and B's mail by id on A's Outbox is 404", async () => {
      const jar = jars.get(role);
      if (!jar) throw new Error(`no session for ${role}`);
      for (const mailId of world.b.mailIds) {
        const page = await fetchPage(jar, `/w/${world.a.workspace.slug}/outbox/${mailId}`);
        expect(page.status).toBe(role === "manager" ? 404 : 403);
        // Apart from the id A's member typed into the address, nothing of B.
        expect(pageLeaks(page.body.replaceAll(String(mailId), ""), world.b)).toEqual([]);
      }
    });
  });
}

describe("mail", () => {
  it("no captured mail to any of A's members contains anything of B", async () => {
    const emails = MEMBER_ROLES.map((role) => world.a.users[role].email);
    const mails = await db().query<{ id: number; content: string }>(
      `SELECT id, concat_ws(E'\\n', subject, text, html, raw) AS content FROM outbox_messages WHERE "to" && $1::text[]`,
      { bind: [emails], type: QueryTypes.SELECT },
    );
    expect(mails.length).toBeGreaterThan(0);
    for (const mail of mails) expect([mail.id, leaksOf(mail.content, world.b)]).toEqual([mail.id, []]);
  });
});

import { NextRequest } from "next/server";
import { QueryTypes } from "sequelize";
import { GET as authGet, POST as authPost } from "@/app/api/auth/[...nextauth]/route";
import { POST as changePasswordRoute } from "@/app/api/account/password/route";
import { GET as digestsGet } from "@/app/api/w/[slug]/digests/route";
import SignInPage from "@/app/(auth)/sign-in/page";
import { SignInForm } from "@/components/auth/sign-in-form";
import { deviceCookieName, verifyDeviceCookie } from "@/lib/auth/device-cookie";
import { authorizeMember, requireUser } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { getSessionUser } from "@/lib/auth/session";
import { removeMember } from "@/lib/team/members";
import { db } from "@/lib/db";
import { callInRequestScope, cookieHeader, setCookies } from "@/tests/integration/security/fixtures-next";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { PASSWORD, makeUser, makeWorkspace } from "./fixtures";

// Sessions through the real next-auth handler and the real session check,
// in-process (nothing mocked): a session cookie from a real sign-in, then the
// same cookie replayed after each event that must end it. A JWT stays validly
// signed until it expires; only users.session_version can refuse it.

jest.setTimeout(90_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

const APP = () => process.env.NEXTAUTH_URL ?? "http://127.0.0.1:3000";
const SESSION = "next-auth.session-token";
const DEVICE = () => deviceCookieName(APP());
const ip = () => `203.0.113.${1 + Math.floor(Math.random() * 250)}`;

type Jar = Record<string, string>;

function request(path: string, init: { method?: string; cookies?: Jar; form?: Record<string, string>; json?: unknown; ip?: string } = {}): NextRequest {
  const headers: Record<string, string> = { "x-forwarded-for": init.ip ?? ip() };
  if (init.cookies && Object.keys(init.cookies).length) headers.cookie = cookieHeader(init.cookies);
  let body: string | undefined;
  if (init.form) {
    headers["content-type"] = "application/x-www-form-urlencoded";
    body = new URLSearchParams(init.form).toString();
  } else if (init.json !== undefined) {
    headers["content-type"] = "application/json";
    body = JSON.stringify(init.json);
  }
  return new NextRequest(`${APP()}${path}`, { method: init.method ?? "GET", headers, body });
}

const auth = (method: "GET" | "POST", action: string[], init: Parameters<typeof request>[1] = {}) =>
  callInRequestScope(method === "GET" ? authGet : authPost, request(`/api/auth/${action.join("/")}`, { ...init, method }), "/api/auth/[...nextauth]/route", {
    nextauth: action,
  });

async function csrf(cookies: Jar = {}): Promise<{ token: string; cookies: Jar }> {
  const response = await auth("GET", ["csrf"], { cookies });
  const { csrfToken } = (await response.json()) as { csrfToken: string };
  return { token: csrfToken, cookies: { ...cookies, ...setCookies(response).values } };
}

/** A browser's sign-in; returns its cookie jar afterwards (session and device cookies included). */
async function signIn(email: string, password: string, jar: Jar = {}): Promise<{ jar: Jar; response: Response }> {
  const c = await csrf(jar);
  const response = await auth("POST", ["callback", "credentials"], { cookies: c.cookies, form: { email, password, csrfToken: c.token, json: "true" } });
  return { jar: { ...c.cookies, ...setCookies(response).values }, response };
}

async function signOut(jar: Jar): Promise<Jar> {
  const c = await csrf(jar);
  const response = await auth("POST", ["signout"], { cookies: c.cookies, form: { csrfToken: c.token, json: "true" } });
  expect(response.status).toBe(200);
  return { ...c.cookies, ...setCookies(response).values };
}

/** What each kind of server code makes of this cookie jar. */
async function seenAs(jar: Jar, slug: string) {
  const page = "/api/w/[slug]/digests/route";
  const user = await callInRequestScope(async () => Response.json(await getSessionUser()), request("/whoami", { cookies: jar }), page, {});
  const api = await callInRequestScope(digestsGet, request(`/api/w/${slug}/digests`, { cookies: jar }), page, { slug });
  const sessionEndpoint = (await (await auth("GET", ["session"], { cookies: jar })).json()) as { user?: { id?: number } };
  let pageOutcome = "rendered";
  try {
    await callInRequestScope(
      async () => {
        await guardPage("/account", () => requireUser());
        return new Response("rendered");
      },
      request("/account", { cookies: jar }),
      "/account/page",
      {},
    );
  } catch (error) {
    const digest = (error as { digest?: string }).digest ?? "";
    pageOutcome = digest.startsWith("NEXT_REDIRECT") ? `redirect ${digest.split(";")[2]}` : `error ${String(error)}`;
  }
  return { user: ((await user.json()) as { id: number } | null)?.id ?? null, api: api.status, sessionEndpoint: sessionEndpoint.user?.id ?? null, page: pageOutcome };
}

const signedIn = (id: number) => ({ user: id, api: 200, sessionEndpoint: id, page: "rendered" });
const ended = { user: null, api: 401, sessionEndpoint: null, page: `redirect /sign-in?callbackUrl=${encodeURIComponent("/account")}` };

async function sessionVersion(userId: number): Promise<number> {
  const [row] = await db().query<{ v: number }>("SELECT session_version AS v FROM users WHERE id = $1", { bind: [userId], type: QueryTypes.SELECT });
  return row.v;
}

describe("device cookie from the sign-in route", () => {
  it("comes with a successful sign-in only, HttpOnly, SameSite=Strict and limited to /api/auth; a browser that has a valid one keeps it", async () => {
    const { workspace, users } = await makeWorkspace({ me: "economist" });
    void workspace;
    const wrong = await signIn(users.me.email, "not the password");
    expect(wrong.jar[DEVICE()]).toBeUndefined();

    const first = await signIn(users.me.email, PASSWORD);
    const line = setCookies(first.response).lines.find((l) => l.startsWith(`${DEVICE()}=`));
    expect(line).toMatch(/; Path=\/api\/auth;/);
    expect(line).toMatch(/; HttpOnly/);
    expect(line).toMatch(/; SameSite=Strict/);
    expect(verifyDeviceCookie(first.jar[DEVICE()], users.me.email, process.env.NEXTAUTH_SECRET)).not.toBeNull();

    const again = await signIn(users.me.email, PASSWORD, { [DEVICE()]: first.jar[DEVICE()] });
    expect(setCookies(again.response).values[SESSION]).toBeTruthy();
    expect(setCookies(again.response).values[DEVICE()]).toBeUndefined();

    // Someone else signing in on this browser gets a cookie for their own address.
    const other = await makeUser("other-on-same-browser");
    const theirs = await signIn(other.email, PASSWORD, { [DEVICE()]: first.jar[DEVICE()] });
    expect(verifyDeviceCookie(theirs.jar[DEVICE()], other.email, process.env.NEXTAUTH_SECRET)).not.toBeNull();
  });
});

describe("next-auth's redirect after signing in", () => {
  it.each(["//evil.example/w/x/desk", "/\\evil.example", "///evil.example", "/%2F%2Fevil.example", "https://evil.example/", "javascript:alert(1)"])(
    "sends a sign-in with callbackUrl %j to this site's home page",
    async (callbackUrl) => {
      const user = await makeUser("redirect");
      const c = await csrf();
      const response = await auth("POST", ["callback", "credentials"], {
        cookies: c.cookies,
        form: { email: user.email, password: PASSWORD, csrfToken: c.token, callbackUrl, json: "true" },
      });
      expect(setCookies(response).values[SESSION]).toBeTruthy();
      expect(((await response.json()) as { url: string }).url).toBe(`${new URL(APP()).origin}/`);
    },
  );

  it("hands the sign-in form only this site's paths (the sign-in page)", async () => {
    const formCallback = async (callbackUrl: string) => {
      let seen: unknown;
      await callInRequestScope(
        async () => {
          const tree = (await SignInPage({ searchParams: Promise.resolve({ callbackUrl }) })) as { props: { children: unknown[] } };
          seen = tree.props.children.flat().find((c) => (c as { type?: unknown })?.type === SignInForm);
          return new Response("rendered");
        },
        request("/sign-in"),
        "/sign-in/page",
        {},
      );
      return (seen as { props: { callbackUrl: string } }).props.callbackUrl;
    };
    expect(await formCallback("//evil.example")).toBe("/");
    expect(await formCallback("/%2F%2Fevil.example")).toBe("/");
    expect(await formCallback("/.//evil.example")).toBe("/");
    expect(await formCallback("/w/somewhere/desk")).toBe("/w/somewhere/desk");
  });

  it("keeps a path on this site", async () => {
    const user = await makeUser("redirect-local");
    const c = await csrf();
    const response = await auth("POST", ["callback", "credentials"], {
      cookies: c.cookies,
      form: { email: user.email, password: PASSWORD, csrfToken: c.token, callbackUrl: "/w/somewhere/desk?x=1", json: "true" },
    });
    expect(((await response.json()) as { url: string }).url).toBe(`${new URL(APP()).origin}/w/somewhere/desk?x=1`);
  });
});

describe("sessions end for real", () => {
  it("refuses a session's cookie after signing out, in every browser of that user, while a new sign-in works", async () => {
    const { workspace, users } = await makeWorkspace({ me: "economist" });
    const laptop = (await signIn(users.me.email, PASSWORD)).jar;
    const phone = (await signIn(users.me.email, PASSWORD)).jar;
    expect(await seenAs(laptop, workspace.slug)).toEqual(signedIn(users.me.id));
    expect(await seenAs(phone, workspace.slug)).toEqual(signedIn(users.me.id));

    // A copy of the cookie taken before signing out (the browser itself drops it).
    const copied = { [SESSION]: laptop[SESSION] };
    const afterSignOut = await signOut(laptop);
    expect(afterSignOut[SESSION]).toBe("");
    expect(await seenAs(copied, workspace.slug)).toEqual(ended);
    expect(await seenAs(phone, workspace.slug)).toEqual(ended);

    const fresh = (await signIn(users.me.email, PASSWORD)).jar;
    expect(await seenAs(fresh, workspace.slug)).toEqual(signedIn(users.me.id));
    // Signing out again with the ended cookie does not end the new session.
    await signOut(copied);
    expect(await seenAs(fresh, workspace.slug)).toEqual(signedIn(users.me.id));
  });

  it("refuses a session's cookie once its user is removed from their last workspace, not before", async () => {
    const first = await makeWorkspace({ boss: "manager", me: "economist" });
    const second = await makeWorkspace({ boss: "manager" });
    const { Membership } = (await import("@/lib/models")).models();
    const me = first.users.me;
    await Membership.create({ workspaceId: second.workspace.id, userId: me.id, role: "subscriber" });
    const jar = (await signIn(me.email, PASSWORD)).jar;
    expect(await seenAs(jar, first.workspace.slug)).toEqual(signedIn(me.id));

    await removeMember(await authorizeMember(first.users.boss.id, first.workspace.slug, "team.manage"), me.id);
    // Still in the second workspace: still signed in, and the first is simply not theirs any more.
    expect(await seenAs(jar, second.workspace.slug)).toEqual(signedIn(me.id));
    expect((await seenAs(jar, first.workspace.slug)).api).toBe(404);

    await removeMember(await authorizeMember(second.users.boss.id, second.workspace.slug, "team.manage"), me.id);
    expect(await seenAs(jar, second.workspace.slug)).toEqual(ended);
  });

  it("refuses every earlier session after a password change; the new password signs in afresh, the old one no longer does", async () => {
    const { workspace, users } = await makeWorkspace({ me: "steward" });
    const changing = (await signIn(users.me.email, PASSWORD)).jar;
    const elsewhere = (await signIn(users.me.email, PASSWORD)).jar;
    const before = await sessionVersion(users.me.id);

    const response = await callInRequestScope(
      changePasswordRoute,
      request("/api/account/password", { method: "POST", cookies: changing, json: { currentPassword: PASSWORD, newPassword: "an entirely new password" } }),
      "/api/account/password/route",
      {},
    );
    expect(response.status).toBe(200);
    expect(await sessionVersion(users.me.id)).toBe(before + 1);
    // Both browsers' sessions have ended, the changing one's too: its form signs in again with the new password.
    expect(await seenAs(changing, workspace.slug)).toEqual(ended);
    expect(await seenAs(elsewhere, workspace.slug)).toEqual(ended);

    const again = await signIn(users.me.email, "an entirely new password", changing);
    expect(await seenAs(again.jar, workspace.slug)).toEqual(signedIn(users.me.id));
    const old = await signIn(users.me.email, PASSWORD);
    expect(setCookies(old.response).values[SESSION]).toBeUndefined();
  });

  it("answers 401 to a password change with an ended session, and changes nothing", async () => {
    const { users } = await makeWorkspace({ me: "economist" });
    const jar = (await signIn(users.me.email, PASSWORD)).jar;
    await signOut({ ...jar });
    const version = await sessionVersion(users.me.id);
    const response = await callInRequestScope(
      changePasswordRoute,
      request("/api/account/password", { method: "POST", cookies: jar, json: { currentPassword: PASSWORD, newPassword: "an entirely new password" } }),
      "/api/account/password/route",
      {},
    );
    expect(response.status).toBe(401);
    expect(await sessionVersion(users.me.id)).toBe(version);
  });
});

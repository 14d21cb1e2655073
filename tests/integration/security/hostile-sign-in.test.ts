import { randomBytes } from "node:crypto";
import { deviceCookieName, issueDeviceCookie } from "@/lib/auth/device-cookie";
import { authOptions } from "@/lib/auth/options";
import { SIGN_IN_ERROR_CODES, SIGN_IN_MESSAGES, signInMessage } from "@/lib/auth/messages";
import { MAX_FAILURES_PER_DEVICE, MAX_FAILURES_PER_EMAIL, MAX_FAILURES_PER_IP, THROTTLE_WINDOW_MINUTES } from "@/lib/auth/throttle";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { PASSWORD, makeUser, unique } from "../auth/fixtures";

// Password guessing against the real credentials provider that next-auth
// calls (lib/auth/options.ts), with the request headers it passes on, and the
// throttle stored in PostgreSQL. tests/integration/auth/credentials.test.ts
// checks the throttle's arithmetic; this file checks what a guesser meets.

type Authorize = (credentials: Record<string, string>, req: { headers: Record<string, string> }) => Promise<{ id: string } | null>;
const authorize = (authOptions.providers[0] as unknown as { options: { authorize: Authorize } }).options.authorize;

/** An address from a documentation range, fresh per call, so tests never share a count. */
function ip(): string {
  const b = randomBytes(2);
  return `198.51.${b[0]}.${b[1]}`;
}

/**
 * One sign-in attempt as next-auth makes it; "throttled" when the provider
 * refuses to check. `deviceCookie` is what the browser sends as its device
 * cookie (lib/auth/device-cookie.ts), if it has one.
 */
async function attempt(email: string, password: string, forwardedFor: string, deviceCookie?: string): Promise<"signed in" | "wrong" | "throttled"> {
  const headers: Record<string, string> = { "x-forwarded-for": forwardedFor };
  if (deviceCookie) headers.cookie = `other=1; ${deviceCookieName(process.env.NEXTAUTH_URL ?? "")}=${deviceCookie}`;
  try {
    const user = await authorize({ email, password }, { headers });
    return user ? "signed in" : "wrong";
  } catch (error) {
    // next-auth sends a thrown message to the form as its error code.
    if (error instanceof Error && error.message === SIGN_IN_ERROR_CODES.throttled) return "throttled";
    throw error;
  }
}

jest.setTimeout(90_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(async () => {
  await closeConnections();
});

describe("sign-in rate limiting", () => {
  it(`refuses an address to clients without its device cookie after ${MAX_FAILURES_PER_EMAIL} wrong passwords, even with the right one and from another network`, async () => {
    const user = await makeUser("guessed");
    const from = ip();
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) expect(await attempt(user.email, `guess-${i}`, from)).toBe("wrong");
    expect(await attempt(user.email, PASSWORD, from)).toBe("throttled");
    expect(await attempt(user.email, PASSWORD, ip())).toBe("throttled");
    expect(await attempt(user.email.toUpperCase(), PASSWORD, ip())).toBe("throttled");
  });

  it(`refuses a network after ${MAX_FAILURES_PER_IP} wrong passwords across many addresses, even for an untouched account`, async () => {
    const noisy = ip();
    for (let i = 0; i < MAX_FAILURES_PER_IP; i++) expect(await attempt(`${unique("spray")}@tessera-test.invalid`, "password1", noisy)).toBe("wrong");
    const user = await makeUser("bystander");
    expect(await attempt(user.email, PASSWORD, noisy)).toBe("throttled");
    expect(await attempt(user.email, PASSWORD, ip())).toBe("signed in");
  });

  it("counts the address a proxy appended, so made-up X-Forwarded-For entries in front do not give a guesser fresh networks", async () => {
    const real = ip();
    for (let i = 0; i < MAX_FAILURES_PER_IP; i++) {
      expect(await attempt(`${unique("rotate")}@tessera-test.invalid`, "password1", `${ip()}, ${real}`)).toBe("wrong");
    }
    const user = await makeUser("behind-proxy");
    expect(await attempt(user.email, PASSWORD, `${ip()}, ${real}`)).toBe("throttled");
  });

  // OWASP device cookies: the owner's browser got a device cookie from its last
  // successful sign-in (the sign-in route sets it; tests/integration/auth/sessions.test.ts
  // follows that through the real route). The cookie is made here the same way.
  it(`does not let a guesser's ${MAX_FAILURES_PER_EMAIL} wrong passwords lock out the owner's browser, which holds its device cookie`, async () => {
    const owner = await makeUser("device-owner");
    const ownersBrowser = issueDeviceCookie(owner.email, process.env.NEXTAUTH_SECRET);
    const attacker = ip();
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) expect(await attempt(owner.email, `guess-${i}`, attacker)).toBe("wrong");
    // Every untrusted client is locked out, the attacker's and any other, even with the right password…
    expect(await attempt(owner.email, PASSWORD, attacker)).toBe("throttled");
    expect(await attempt(owner.email, PASSWORD, ip())).toBe("throttled");
    // …but the owner's browser signs in, from its own network or the attacker's.
    expect(await attempt(owner.email, PASSWORD, ip(), ownersBrowser)).toBe("signed in");
    expect(await attempt(owner.email, PASSWORD, attacker, ownersBrowser)).toBe("signed in");
    // The untrusted lockout stands: the owner's success does not reopen it for the guesser.
    expect(await attempt(owner.email, PASSWORD, ip())).toBe("throttled");
  });

  it(`throttles a trusted browser on its own after ${MAX_FAILURES_PER_DEVICE} wrong passwords, leaving other trusted browsers alone`, async () => {
    const owner = await makeUser("device-typos");
    const laptop = issueDeviceCookie(owner.email, process.env.NEXTAUTH_SECRET);
    const phone = issueDeviceCookie(owner.email, process.env.NEXTAUTH_SECRET);
    for (let i = 0; i < MAX_FAILURES_PER_DEVICE; i++) expect(await attempt(owner.email, `typo-${i}`, ip(), laptop)).toBe("wrong");
    expect(await attempt(owner.email, PASSWORD, ip(), laptop)).toBe("throttled");
    expect(await attempt(owner.email, PASSWORD, ip(), phone)).toBe("signed in");
    // The laptop's failures are its own: untrusted clients were not locked out by them.
    expect(await attempt(owner.email, PASSWORD, ip())).toBe("signed in");
  });

  it("treats a device cookie for another address, or a forged one, as no cookie at all", async () => {
    const owner = await makeUser("device-victim");
    const attackersOwn = await makeUser("device-attacker");
    const attackersCookie = issueDeviceCookie(attackersOwn.email, process.env.NEXTAUTH_SECRET);
    const forged = issueDeviceCookie(owner.email, "a secret the attacker made up");
    const from = ip();
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) {
      expect(await attempt(owner.email, `guess-${i}`, from, i % 2 ? attackersCookie : forged)).toBe("wrong");
    }
    expect(await attempt(owner.email, PASSWORD, ip(), attackersCookie)).toBe("throttled");
    expect(await attempt(owner.email, PASSWORD, ip(), forged)).toBe("throttled");
    expect(await attempt(owner.email, PASSWORD, ip())).toBe("throttled");
  });

  it("keeps the per-network limit for untrusted clients, while a browser with its device cookie still signs in from that network", async () => {
    const noisy = ip();
    for (let i = 0; i < MAX_FAILURES_PER_IP; i++) expect(await attempt(`${unique("spray2")}@tessera-test.invalid`, "password1", noisy)).toBe("wrong");
    const user = await makeUser("same-office");
    expect(await attempt(user.email, PASSWORD, noisy)).toBe("throttled");
    expect(await attempt(user.email, PASSWORD, noisy, issueDeviceCookie(user.email, process.env.NEXTAUTH_SECRET))).toBe("signed in");
  });

  it("tells the refused person plainly what happened and how long to wait, without saying whether the password was right", () => {
    const message = signInMessage(SIGN_IN_ERROR_CODES.throttled);
    expect(message).toBe(SIGN_IN_MESSAGES.throttled);
    expect(message).toMatch(/Too many sign-in attempts/);
    expect(message).toContain(`${THROTTLE_WINDOW_MINUTES} minutes`);
    expect(message).not.toMatch(/password (was|is) (right|correct|wrong)/i);
  });
});

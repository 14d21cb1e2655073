import { randomBytes } from "node:crypto";
import { authOptions } from "@/lib/auth/options";
import { SIGN_IN_ERROR_CODES, SIGN_IN_MESSAGES, signInMessage } from "@/lib/auth/messages";
import { MAX_FAILURES_PER_EMAIL, MAX_FAILURES_PER_IP, THROTTLE_WINDOW_MINUTES } from "@/lib/auth/throttle";
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

/** One sign-in attempt as next-auth makes it; "throttled" when the provider refuses to check. */
async function attempt(email: string, password: string, forwardedFor: string): Promise<"signed in" | "wrong" | "throttled"> {
  try {
    const user = await authorize({ email, password }, { headers: { "x-forwarded-for": forwardedFor } });
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
  it(`refuses an address after ${MAX_FAILURES_PER_EMAIL} wrong passwords, even with the right one and from another network`, async () => {
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

  it("tells the refused person plainly what happened and how long to wait, without saying whether the password was right", () => {
    const message = signInMessage(SIGN_IN_ERROR_CODES.throttled);
    expect(message).toBe(SIGN_IN_MESSAGES.throttled);
    expect(message).toMatch(/Too many sign-in attempts/);
    expect(message).toContain(`${THROTTLE_WINDOW_MINUTES} minutes`);
    expect(message).not.toMatch(/password (was|is) (right|correct|wrong)/i);
  });
});

import { QueryTypes } from "sequelize";
import { verifySignIn } from "@/lib/auth/credentials";
import { SIGN_IN_MESSAGES, signInMessage } from "@/lib/auth/messages";
import { MAX_FAILURES_PER_EMAIL, MAX_FAILURES_PER_IP } from "@/lib/auth/throttle";
import { db } from "@/lib/db";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { PASSWORD, makeUser, unique } from "./fixtures";

jest.setTimeout(60_000);

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

const ip = () => `198.51.100.${Math.floor(Math.random() * 250) + 1}-${unique("ip")}`.slice(0, 60);

describe("sign-in with e-mail and password", () => {
  it("accepts the right password, with the address in any case", async () => {
    const user = await makeUser("ok");
    const result = await verifySignIn(`  ${user.email.toUpperCase()} `, PASSWORD, ip());
    expect(result).toEqual({ ok: true, user: { id: user.id, email: user.email, name: user.name, sessionVersion: 0 }, trustedDevice: false });
  });

  it("gives the same answer and message for a wrong password and an unknown address", async () => {
    const user = await makeUser("wrong");
    const wrongPassword = await verifySignIn(user.email, "not the password", ip());
    const unknownAddress = await verifySignIn(`${unique("nobody")}@tessera-test.invalid`, PASSWORD, ip());
    expect(wrongPassword).toEqual({ ok: false, reason: "invalid" });
    expect(unknownAddress).toEqual(wrongPassword);
    // The form shows next-auth's error code through one mapping; both cases arrive as CredentialsSignin.
    expect(signInMessage("CredentialsSignin")).toBe(SIGN_IN_MESSAGES.invalid);
  });

  it("records successes and failures in the audit trail and in login_attempts", async () => {
    const user = await makeUser("audited");
    const from = ip();
    await verifySignIn(user.email, "nope nope nope", from);
    await verifySignIn(user.email, PASSWORD, from);
    const events = await db().query<{ action: string; actor_id: number | null }>(
      "SELECT action, actor_id FROM audit_events WHERE actor_email = $1 ORDER BY id",
      { bind: [user.email], type: QueryTypes.SELECT },
    );
    expect(events).toEqual([
      { action: "sign-in.failed", actor_id: user.id },
      { action: "sign-in.succeeded", actor_id: user.id },
    ]);
    const attempts = await db().query<{ succeeded: boolean; ip: string }>(
      "SELECT succeeded, ip FROM login_attempts WHERE email = $1 ORDER BY id",
      { bind: [user.email], type: QueryTypes.SELECT },
    );
    expect(attempts).toEqual([
      { succeeded: false, ip: from },
      { succeeded: true, ip: from },
    ]);
  });
});

describe("throttling (stored in the database)", () => {
  it(`locks an address after ${MAX_FAILURES_PER_EMAIL} failures, even for the right password, from any IP`, async () => {
    const user = await makeUser("locked");
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) {
      expect(await verifySignIn(user.email, `guess ${i}`, ip())).toEqual({ ok: false, reason: "invalid" });
    }
    const locked = await verifySignIn(user.email, PASSWORD, ip());
    expect(locked.ok).toBe(false);
    expect(locked.ok === false && locked.reason).toBe("throttled");
    expect(locked.ok === false && locked.reason === "throttled" && locked.retryAfterSeconds).toBeGreaterThan(14 * 60);
    // A throttled attempt is not a new failure, so it does not lengthen the lockout.
    const [{ count }] = await db().query<{ count: string }>(
      "SELECT count(*) FROM login_attempts WHERE email = $1 AND NOT succeeded",
      { bind: [user.email], type: QueryTypes.SELECT },
    );
    expect(Number(count)).toBe(MAX_FAILURES_PER_EMAIL);
  });

  it("throttles an unknown address exactly like a known one (no hint about which exist)", async () => {
    const email = `${unique("ghost")}@tessera-test.invalid`;
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) await verifySignIn(email, "x", ip());
    const result = await verifySignIn(email, "x", ip());
    expect(result.ok === false && result.reason).toBe("throttled");
  });

  it("does not lock other addresses when one is locked", async () => {
    const victim = await makeUser("victim");
    const bystander = await makeUser("bystander");
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL; i++) await verifySignIn(victim.email, "x", ip());
    expect((await verifySignIn(bystander.email, PASSWORD, ip())).ok).toBe(true);
  });

  it(`limits one IP to ${MAX_FAILURES_PER_IP} failures across many addresses`, async () => {
    const noisy = ip();
    for (let i = 0; i < MAX_FAILURES_PER_IP; i++) {
      await verifySignIn(`${unique("spray")}@tessera-test.invalid`, "x", noisy);
    }
    const user = await makeUser("same-ip");
    const fromNoisy = await verifySignIn(user.email, PASSWORD, noisy);
    expect(fromNoisy.ok === false && fromNoisy.reason).toBe("throttled");
    expect((await verifySignIn(user.email, PASSWORD, ip())).ok).toBe(true);
  });

  it("starts the count for an address again after a successful sign-in", async () => {
    const user = await makeUser("reset");
    for (let i = 0; i < MAX_FAILURES_PER_EMAIL - 1; i++) await verifySignIn(user.email, "x", ip());
    expect((await verifySignIn(user.email, PASSWORD, ip())).ok).toBe(true);
    await verifySignIn(user.email, "x", ip());
    expect((await verifySignIn(user.email, PASSWORD, ip())).ok).toBe(true);
  });
});

import net from "node:net";

/**
 * Integration and browser tests run only against the throwaway test services
 * (`npm test`, or `npm run services:test` + the variables it prints), never
 * against the development database of `npm start`.
 */
const HOW_TO =
  "Run `npm test`, or start the test services with `npm run services:test` in another shell and export the variables it prints before running jest.";

export type TestServices = { databaseUrl: string; s3Endpoint: string; s3Bucket: string; smtpHost: string; smtpPort: number; appUrl: string };

function requireVar(name: string): string {
  const value = process.env[name];
  if (!value) throw new Error(`Test environment: ${name} is not set. ${HOW_TO}`);
  return value;
}

export function canConnect(host: string, port: number, timeoutMs = 1_500): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host, port });
    const done = (ok: boolean) => {
      socket.destroy();
      resolve(ok);
    };
    socket.setTimeout(timeoutMs, () => done(false));
    socket.once("connect", () => done(true));
    socket.once("error", () => done(false));
  });
}

/** The test services' addresses, from the environment test.mjs exports. Throws with instructions when absent. */
export function testServices(): TestServices {
  if (process.env.TESSERA_TEST !== "1") {
    throw new Error(`Test environment: TESSERA_TEST=1 is not set, so these are not the test services. ${HOW_TO}`);
  }
  return {
    databaseUrl: requireVar("DATABASE_URL"),
    s3Endpoint: requireVar("S3_ENDPOINT"),
    s3Bucket: requireVar("S3_BUCKET"),
    smtpHost: requireVar("SMTP_HOST"),
    smtpPort: Number(requireVar("SMTP_PORT")),
    appUrl: requireVar("NEXTAUTH_URL"),
  };
}

/**
 * Call in beforeAll of every integration test: fails with one clear message
 * naming the service that is down and how to start it.
 */
export async function requireTestServices(options: { app?: boolean } = {}): Promise<TestServices> {
  const s = testServices();
  const db = new URL(s.databaseUrl);
  const s3 = new URL(s.s3Endpoint);
  const app = new URL(s.appUrl);
  const checks: [string, string, number][] = [
    ["PostgreSQL (DATABASE_URL)", db.hostname, Number(db.port || 5432)],
    ["S3 (S3_ENDPOINT)", s3.hostname, Number(s3.port || 80)],
    ["SMTP sink (SMTP_HOST:SMTP_PORT)", s.smtpHost, s.smtpPort],
  ];
  if (options.app) checks.push(["web app (NEXTAUTH_URL)", app.hostname, Number(app.port || 80)]);
  const down: string[] = [];
  for (const [what, host, port] of checks) {
    if (!(await canConnect(host, port))) down.push(`${what} at ${host}:${port}`);
  }
  if (down.length) throw new Error(`Test services not reachable: ${down.join("; ")}. ${HOW_TO}`);
  return s;
}

/** A unique, valid e-mail address for one test (the sink accepts any domain). */
export function uniqueAddress(label = "test"): string {
  return `${label}-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 8)}@tessera-test.invalid`;
}

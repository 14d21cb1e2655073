/**
 * Load benchmark (not a test): concurrent signed-in clients drive the
 * catalogue and timeline APIs of a running Tessera for a bounded time and the
 * script prints requests per second, p50/p95/p99 latency and the error count.
 *
 *   npm start                                   # in another shell: the app with the demo seeded
 *   npm run -s load                             # 30 s, 16 connections, against NEXTAUTH_URL from .env
 *   npm run -s load -- --duration 60 --connections 32 --url http://127.0.0.1:3000
 *   npm run -s load -- --catalogue-rows 0       # no synthetic 10,000-row run, demo data only
 *
 * Five phases share the duration: the catalogue over a synthetic 10,000-row
 * run with one client (the performance targets in docs/benchmarks.md: p95 under 200 ms), the same
 * asking for gzip as a browser does, then with all connections, timelines of
 * the demo indicators, and the two mixed. The synthetic run is written straight into
 * DATABASE_URL (state "completed", origin "benchmark") before the phases and
 * deleted afterwards, also on Ctrl-C. Clients sign in as the four demo
 * accounts through next-auth's credentials endpoint, so every request passes
 * the real session and role checks. Exit status 1 when any request failed.
 */
import autocannon from "autocannon";
import { config as loadDotenv } from "dotenv";
import { readFileSync } from "node:fs";
import path from "node:path";
import { z } from "zod";
import { catalogueRowsOf, type CatalogueAnswer } from "../../lib/runs/catalogue-wire";

loadDotenv({ quiet: true });
const ROOT = process.cwd();

const argsSchema = z.object({
  url: z.string().url("--url must be an http(s) URL such as http://127.0.0.1:3000"),
  duration: z.coerce.number().int().min(3, "--duration must be at least 3 seconds").max(600, "--duration is capped at 600 seconds"),
  connections: z.coerce.number().int().min(1).max(256, "--connections is capped at 256"),
  workspace: z.string().regex(/^[a-z0-9-]+$/, "--workspace must be a workspace slug"),
  catalogueRows: z.coerce.number().int().min(0).max(10_000, "--catalogue-rows is at most 10,000 (200 indicators × 50 periods)"),
});
type Args = z.infer<typeof argsSchema>;

function parseArgs(argv: string[]): Args {
  const demo = JSON.parse(readFileSync(path.join(ROOT, "seeders", "demo-accounts.json"), "utf8")) as { workspace: { slug: string } };
  const raw: Record<string, string> = {
    url: process.env.NEXTAUTH_URL ?? "http://127.0.0.1:3000",
    duration: "30",
    connections: "16",
    workspace: demo.workspace.slug,
    catalogueRows: "10000",
  };
  const names: Record<string, keyof typeof raw> = { "--url": "url", "--duration": "duration", "--connections": "connections", "--workspace": "workspace", "--catalogue-rows": "catalogueRows" };
  for (let i = 0; i < argv.length; i++) {
    const key = names[argv[i]];
    if (!key || argv[i + 1] === undefined) fail(`unknown or incomplete option "${argv[i]}"; use ${Object.keys(names).join(", ")} followed by a value`);
    raw[key] = argv[++i];
  }
  const parsed = argsSchema.safeParse(raw);
  if (!parsed.success) fail(parsed.error.issues.map((i) => i.message).join("; "));
  return parsed.data;
}

function fail(message: string): never {
  process.stderr.write(`load: ${message}\n`);
  process.exit(2);
}

type Account = { email: string; password: string; role: string };

/** Signs in through next-auth's credentials endpoint and returns the session cookie. */
async function signIn(base: string, account: Account): Promise<string> {
  const csrf = await fetch(`${base}/api/auth/csrf`);
  if (!csrf.ok) throw new Error(`GET ${base}/api/auth/csrf answered ${csrf.status}`);
  const { csrfToken } = (await csrf.json()) as { csrfToken: string };
  const csrfCookie = csrf.headers.getSetCookie().map((c) => c.split(";")[0]).join("; ");
  const response = await fetch(`${base}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: csrfCookie },
    body: new URLSearchParams({ csrfToken, email: account.email, password: account.password, callbackUrl: base, json: "true" }),
  });
  const session = response.headers.getSetCookie().find((c) => /^(__Secure-)?next-auth\.session-token=/.test(c));
  if (!session) throw new Error(`signing in as ${account.email} gave no session cookie (status ${response.status}); is the demo seeded, or is sign-in throttled after failed attempts?`);
  return session.split(";")[0];
}

/** connections: undefined means the --connections value. */
type Phase = { name: string; paths: string[]; connections?: number; target?: { p95Ms: number }; gzip?: boolean };

type PhaseResult = {
  name: string;
  requests: number;
  rps: number;
  p50: number;
  p95: number;
  p99: number;
  max: number;
  errors: number;
  non2xx: number;
  statuses: Record<string, number>;
  target?: { p95Ms: number };
};

function percentile(sorted: number[], q: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.floor(q * (sorted.length - 1)))];
}

async function runPhase(base: string, cookies: string[], phase: Phase, seconds: number, connections: number): Promise<PhaseResult> {
  const latencies: number[] = [];
  let next = 0;
  const result = await new Promise<autocannon.Result>((resolve, reject) => {
    const instance = autocannon(
      {
        url: base,
        connections,
        duration: seconds,
        timeout: 10,
        // Each connection is a signed-in client. autocannon's setHeaders only
        // touches the current request of a sequence, so the session cookie is
        // put on every request from the connection's context instead (the
        // context is reset when a sequence restarts: accounts rotate per cycle).
        requests: phase.paths.map(
          (p, index): autocannon.Request => ({
            method: "GET",
            path: p,
            setupRequest: (request: autocannon.Request, context: object) => {
              const client = context as { cookie?: string };
              if (index === 0 || client.cookie === undefined) client.cookie = cookies[next++ % cookies.length];
              const encoding = phase.gzip ? { "accept-encoding": "gzip" } : {};
              return { ...request, headers: { ...request.headers, ...encoding, accept: "application/json", cookie: client.cookie } };
            },
          }),
        ),
      },
      (error: Error | null, finished: autocannon.Result) => (error ? reject(error) : resolve(finished)),
    );
    instance.on("response", (_client, _status, _bytes, responseTime) => latencies.push(responseTime));
  });
  latencies.sort((a, b) => a - b);
  return {
    name: phase.name,
    requests: result.requests.total,
    rps: result.requests.total / (result.duration || seconds),
    p50: percentile(latencies, 0.5),
    p95: percentile(latencies, 0.95),
    p99: percentile(latencies, 0.99),
    max: latencies[latencies.length - 1] ?? NaN,
    errors: result.errors + result.timeouts,
    non2xx: result.non2xx,
    statuses: Object.fromEntries(Object.entries(result.statusCodeStats ?? {}).map(([code, stat]) => [code, stat.count ?? 0])),
    target: phase.target,
  };
}

function format(results: PhaseResult[]): string {
  const head = ["phase", "requests", "req/s", "p50 ms", "p95 ms", "p99 ms", "max ms", "errors", "non-2xx", "target"];
  const lines = results.map((r) => [
    r.name,
    String(r.requests),
    r.rps.toFixed(0),
    r.p50.toFixed(1),
    r.p95.toFixed(1),
    r.p99.toFixed(1),
    r.max.toFixed(0),
    String(r.errors),
    String(r.non2xx),
    r.target ? `p95 < ${r.target.p95Ms} ms: ${r.p95 < r.target.p95Ms ? "met" : "MISSED"}` : "—",
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...lines.map((l) => l[i].length)));
  return [head, ...lines].map((cols) => cols.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join("  ")).join("\n");
}

async function main(): Promise<void> {
  const args = parseArgs(process.argv.slice(2));
  const base = args.url.replace(/\/$/, "");
  try {
    await fetch(`${base}/api/auth/csrf`);
  } catch {
    fail(`no Tessera app answers at ${base}; start it with \`npm start\` (or pass --url)`);
  }
  const demo = JSON.parse(readFileSync(path.join(ROOT, "seeders", "demo-accounts.json"), "utf8")) as { accounts: Account[] };
  const cookies = await Promise.all(demo.accounts.map((a) => signIn(base, a)));
  const api = `/api/w/${args.workspace}`;

  const catalogue = await fetch(`${base}${api}/catalogue`, { headers: { cookie: cookies[0] } });
  if (!catalogue.ok) fail(`GET ${api}/catalogue answered ${catalogue.status}: ${(await catalogue.text()).slice(0, 200)}`);
  const demoRows = catalogueRowsOf((await catalogue.json()) as CatalogueAnswer);
  const indicators = [...new Set(demoRows.map((r) => r.indicator))];
  if (indicators.length === 0) fail(`workspace "${args.workspace}" has no analysed indicator; run the demo analysis (npm start seeds one)`);
  const timelinePaths = indicators.map((code) => `${api}/timeline?indicator=${encodeURIComponent(code)}`);

  let synthetic: { id: number; remove: () => Promise<void> } | null = null;
  const cleanUp = async () => {
    if (synthetic) await synthetic.remove().catch((e: unknown) => process.stderr.write(`load: could not delete synthetic run ${synthetic?.id}: ${String(e)}\n`));
    synthetic = null;
  };
  process.once("SIGINT", () => void cleanUp().finally(() => process.exit(130)));
  try {
    if (args.catalogueRows > 0) {
      const { createSyntheticRun } = await import("./synthetic-run");
      synthetic = await createSyntheticRun({ rows: args.catalogueRows, indicatorPrefix: "load_indicator_", workspaceSlug: args.workspace });
    }
    const cataloguePaths = synthetic
      ? [`${api}/catalogue?run=${synthetic.id}`, `${api}/catalogue?run=${synthetic.id}&class=clustering`, `${api}/catalogue?run=${synthetic.id}&from=2000&to=2010&q=indicator_1`]
      : [`${api}/catalogue`, `${api}/catalogue?class=clustering`];
    const catalogueName = synthetic ? `catalogue (${args.catalogueRows.toLocaleString("en")}-row run)` : "catalogue (demo)";
    // The catalogue target (docs/benchmarks.md) is a response time, so it is judged with one
    // client; under N clients on a 2-core machine the same work queues up.
    const phases: Phase[] = [
      { name: `${catalogueName}, 1 client`, paths: cataloguePaths, connections: 1, target: { p95Ms: 200 } },
      // What a browser gets: it asks for gzip, and the server compresses the 2.4 MB answer.
      { name: `${catalogueName}, 1 client, gzip`, paths: cataloguePaths, connections: 1, gzip: true },
      { name: catalogueName, paths: cataloguePaths },
      { name: `timeline (${indicators.length} indicators)`, paths: timelinePaths },
      { name: "mixed", paths: [...cataloguePaths, ...timelinePaths] },
    ];
    const seconds = Math.max(1, Math.floor(args.duration / phases.length));
    console.log(`load: ${base}, ${args.connections} signed-in connections unless marked (${demo.accounts.length} accounts), ${seconds} s per phase`);
    const results: PhaseResult[] = [];
    for (const phase of phases) results.push(await runPhase(base, cookies, phase, seconds, phase.connections ?? args.connections));
    console.log(format(results));
    for (const r of results) {
      const odd = Object.entries(r.statuses).filter(([code]) => !code.startsWith("2"));
      if (odd.length > 0) console.log(`${r.name}: status counts ${odd.map(([code, n]) => `${code}×${n}`).join(", ")}`);
    }
    const failed = results.reduce((s, r) => s + r.errors + r.non2xx, 0);
    console.log(failed === 0 ? "errors: 0" : `errors: ${failed} request(s) failed or answered non-2xx`);
    process.exitCode = failed === 0 ? 0 : 1;
  } finally {
    await cleanUp();
    const { db } = await import("../../lib/db");
    await db().close().catch(() => undefined);
  }
}

main().catch((error: unknown) => {
  process.stderr.write(`load: ${error instanceof Error ? error.message : String(error)}\n`);
  process.exit(1);
});

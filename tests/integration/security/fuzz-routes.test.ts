import { readFileSync } from "node:fs";
import path from "node:path";
import fc from "fast-check";
import { z } from "zod";
import { getSessionUser } from "@/lib/auth/session";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { weightsPreviewQuerySchema } from "@/lib/geometry/weights-preview";
import { harmoniseDefaultsQuerySchema } from "@/lib/reforms/service";
import { exportQuerySchema } from "@/lib/runs/exports";
import { catalogueQuerySchema, compareQuerySchema, geometryQuerySchema, panelTransitionsQuerySchema, periodQuerySchema, timelineQuerySchema } from "@/lib/runs/schemas";
import { closeConnections } from "@/tests/helpers/teardown";
import { requireTestServices } from "@/tests/helpers/env";
import { makeUser, PASSWORD } from "@/tests/integration/auth/fixtures";
import { buildWorld, type Caller, type World } from "./fixtures-world";
import { DOCUMENTED_ROLES, PUBLIC_ROWS, WORKSPACE_ROWS, urlOf, type Call, type WorkspaceRow } from "./route-matrix";
import { bodyOf, handlerOf, send, signedInAs, signInCaller } from "./route-calls";

// Every route of the access matrix, called in-process by a member allowed to
// use it, with one part of an otherwise valid call replaced by a hostile value
// from fast-check: each path parameter, each search parameter the route reads,
// each field of its JSON body (from the very zod schema memberRoute parses).
// The answer must never be a 5xx, and a 400 must name what was replaced.
// Malformed ids, slugs and kinds must be a 400, not a lookup.
//
// Reproducible: a fixed seed (FUZZ_SEED overrides it, FUZZ_RUNS the runs per
// target); a failure prints the seed, the path and the shrunk counterexample.

jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

jest.setTimeout(180_000);

const SEED = Number(process.env.FUZZ_SEED ?? 20261210);
const RUNS = Number(process.env.FUZZ_RUNS ?? 30);
const ROOT = process.cwd();

let world: World;
beforeAll(async () => {
  await requireTestServices();
  world = await buildWorld();
});
afterAll(async () => {
  await closeIntakePool();
  await closeConnections();
});

// ——— hostile values

const CONTROLS = ["\u0000", "\u0001", "\u0007", "\u0008", "\u000b", "\u000c", "\u001b", "\u007f", "\u0085", "\u009f", "\r", "\n", "\t"];
const ODD_TEXT = [
  "",
  " ",
  "null",
  "undefined",
  "NaN",
  "Infinity",
  "__proto__",
  "constructor",
  "%00",
  "%",
  "../../etc/passwd",
  "' OR 1=1 --",
  "\\",
  "\uFEFF",
  "\u202Eevil",
  "\uD800",
  "\uDFFF",
  "🀄🧮",
  "ｒｕｎ",
  "<script>alert(1)</script>",
  "a".repeat(121),
  "a".repeat(201),
  "a".repeat(256),
  "é".repeat(4001),
];

/** Strings a careless handler would pass on: control characters, NUL, over-long, odd unicode. */
const hostileText: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom(...ODD_TEXT),
  fc.tuple(fc.string({ maxLength: 8 }), fc.constantFrom(...CONTROLS), fc.string({ maxLength: 8 })).map(([a, c, b]) => `${a}${c}${b}`),
  fc.string({ unit: "binary", maxLength: 40 }),
  fc.string({ unit: "grapheme", maxLength: 40 }),
  fc.integer({ min: 1_000, max: 70_000 }).map((n) => "x".repeat(n)),
);

const ODD_NUMBERS = [
  "0",
  "-0",
  "-1",
  "00",
  "01",
  "1.5",
  "1.0",
  "1e3",
  "1E400",
  "2147483647",
  "2147483648",
  "-2147483649",
  "4294967296",
  "9007199254740993",
  "9223372036854775807",
  "9223372036854775808",
  "99999999999999999999999999999",
  "Infinity",
  "NaN",
  "0x10",
  "+1",
  " 1",
  "1 ",
  "1\u0000",
  "١٢",
  "１",
  "9".repeat(400),
];

/** Text that looks like an id and is not one (or is one, out of range). */
const hostileIdText: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom(...ODD_NUMBERS),
  fc.bigInt({ min: -(2n ** 80n), max: 2n ** 80n }).map(String),
  fc.double().map(String),
  hostileText,
);

const ODD_JSON: unknown[] = [
  null,
  true,
  false,
  0,
  -1,
  0.5,
  -0.000001,
  2_147_483_647,
  2_147_483_648,
  -2_147_483_649,
  2 ** 53 + 2,
  9.3e18,
  1e20,
  1e308,
  -1e308,
  5e-324,
  [],
  {},
  [null],
  { __proto__: { polluted: true } },
  Array.from({ length: 10_001 }, () => "a"),
  JSON.parse(`${"[".repeat(200)}${"]".repeat(200)}`),
];

/** Any JSON value a body field might receive. */
const hostileJson: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 3, arbitrary: hostileText },
  { weight: 2, arbitrary: fc.constantFrom(...ODD_JSON) },
  { weight: 1, arbitrary: hostileIdText },
  { weight: 1, arbitrary: fc.double({ noNaN: true }) },
  { weight: 1, arbitrary: fc.integer() },
  { weight: 1, arbitrary: fc.array(hostileText, { maxLength: 3 }) },
  { weight: 1, arbitrary: fc.dictionary(fc.string({ maxLength: 6 }), hostileText, { maxKeys: 3 }) },
);

// ——— what may a parameter hold (anything else must be a 400 naming it)

const SLUG = /^[a-z0-9][a-z0-9-]{0,63}$/;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const isRowId = (v: string) => /^[1-9][0-9]{0,9}$/.test(v) && Number(v) <= 2_147_483_647;

/** Whether `value` has the shape of path parameter `name`; null when any text may be meaningful (an indicator code). */
function wellFormedParam(name: string, value: string): boolean | null {
  if (name === "slug") return SLUG.test(value);
  if (name === "uploadId") return UUID.test(value);
  if (name === "kind") return value === "panel" || value === "boundaries";
  if (/Id$/.test(name)) return isRowId(value);
  return null;
}

function paramArbitrary(name: string): fc.Arbitrary<string> {
  return name === "slug" || name === "kind" || name === "code" ? hostileText : hostileIdText;
}

/** The search-parameter schema of each route that reads search parameters. */
const QUERY_SCHEMAS: Record<string, z.ZodObject> = {
  "app/api/w/[slug]/intake/boundaries/[versionId]/weights/route.ts": weightsPreviewQuerySchema,
  "app/api/w/[slug]/catalogue/route.ts": catalogueQuerySchema,
  "app/api/w/[slug]/catalogue/export/route.ts": catalogueQuerySchema,
  "app/api/w/[slug]/timeline/route.ts": timelineQuerySchema,
  "app/api/w/[slug]/timeline/robustness/route.ts": periodQuerySchema,
  "app/api/w/[slug]/map/route.ts": periodQuerySchema,
  "app/api/w/[slug]/map/geometry/route.ts": geometryQuerySchema,
  "app/api/w/[slug]/compare/route.ts": compareQuerySchema,
  "app/api/w/[slug]/map/transitions/route.ts": panelTransitionsQuerySchema,
  "app/api/w/[slug]/map/rates/route.ts": periodQuerySchema,
  "app/api/w/[slug]/intake/harmonise/defaults/route.ts": harmoniseDefaultsQuerySchema,
  "app/api/w/[slug]/runs/[runId]/export/[kind]/route.ts": exportQuerySchema,
};

// ——— body fields

type FieldPath = (string | number)[];

/** Field paths of a body: the schema's own properties (optional ones too) and every leaf of the valid body. */
function bodyFields(schema: z.ZodType, valid: unknown): FieldPath[] {
  const json = z.toJSONSchema(schema, { io: "input", unrepresentable: "any" }) as { properties?: Record<string, unknown> };
  const seen = new Map<string, FieldPath>();
  const add = (p: FieldPath) => seen.set(p.join("."), p);
  for (const key of Object.keys(json.properties ?? {})) add([key]);
  const walk = (value: unknown, at: FieldPath) => {
    if (at.length) add(at);
    if (Array.isArray(value)) value.forEach((v, i) => walk(v, [...at, i]));
    else if (value && typeof value === "object") for (const [k, v] of Object.entries(value)) walk(v, [...at, k]);
  };
  walk(valid, []);
  return [...seen.values()];
}

function withField(body: unknown, at: FieldPath, value: unknown): unknown {
  const copy = structuredClone(body) as Record<string | number, unknown>;
  let node: Record<string | number, unknown> = copy;
  for (const key of at.slice(0, -1)) node = node[key] as Record<string | number, unknown>;
  node[at[at.length - 1]] = value;
  return copy;
}

/** Whether a 400's `field` names what was replaced (or a part of it, or the object holding it). */
function names(field: unknown, target: string): boolean {
  if (typeof field !== "string") return false;
  return field === target || field.startsWith(`${target}.`) || target.startsWith(`${field}.`);
}

// ——— the checks

interface Target {
  label: string;
  /** The name a 400 must carry; null when the whole body was replaced (a 400 may name any field or none). */
  field: string | null;
  arbitrary: fc.Arbitrary<unknown>;
  call: (value: unknown) => Call;
  /** True: the value is well-formed (may be 2xx/404); false: it must be a 400; null: not known. */
  wellFormed?: (value: unknown) => boolean | null;
}

const show = (v: unknown) => {
  const s = typeof v === "string" ? JSON.stringify(v) : JSON.stringify(v) ?? String(v);
  return s.length > 120 ? `${s.slice(0, 120)}… (${s.length} chars)` : s;
};

/** `privateAnswer`: a workspace route, whose every answer must say no-store (memberRoute). */
async function expectHandled(response: Response, target: Target, value: unknown, where: string, privateAnswer = true): Promise<void> {
  const body = await bodyOf(response);
  const context = `${where} with ${target.label} = ${show(value)} answered ${response.status}: ${JSON.stringify(body).slice(0, 400)}`;
  if (response.status >= 500) throw new Error(`5xx: ${context}`);
  if (privateAnswer && response.headers.get("cache-control") !== "no-store") throw new Error(`no "cache-control: no-store" (got ${response.headers.get("cache-control")}): ${context}`);
  const wellFormed = target.wellFormed?.(value) ?? null;
  if (wellFormed === false && response.status !== 400) throw new Error(`expected 400 naming "${target.field}": ${context}`);
  if (response.status === 400 && target.field !== null) {
    const field = body && typeof body === "object" ? (body as { field?: unknown }).field : undefined;
    if (!names(field, target.field)) throw new Error(`400 does not name "${target.field}" (field ${JSON.stringify(field)}): ${context}`);
  }
}

/**
 * Values every target gets first, whatever the seed draws: NUL and other
 * controls, over-long text, integers past int4 and int8, as text and as numbers.
 */
const ALWAYS: unknown[] = ["\u0000", "a\u0000b", "\ud800", "\u001b[31m", "x".repeat(100_000), "2147483648", "9223372036854775808", "-1", "1.5", 2_147_483_648, 9.3e18, -1, 1.5];

/** Runs `property` with the fixed seed; null when it holds, else the first failure with the seed and path that replay it. */
async function falsify<T extends [unknown, ...unknown[]]>(label: string, property: fc.IAsyncProperty<T>, runs = RUNS, examples: T[] = []): Promise<string | null> {
  const details = await fc.check(property, { seed: SEED, numRuns: runs, endOnFailure: true, examples });
  if (!details.failed) return null;
  const cause = details.errorInstance instanceof Error ? details.errorInstance.message : String(details.errorInstance);
  return `${label} (replay: FUZZ_SEED=${details.seed}, fast-check path "${details.counterexamplePath ?? ""}"): ${cause}`;
}

async function expectHolds<T extends [unknown, ...unknown[]]>(label: string, property: fc.IAsyncProperty<T>, runs = RUNS): Promise<void> {
  const failure = await falsify(label, property, runs);
  if (failure) throw new Error(failure);
}

function targetsOf(row: WorkspaceRow, valid: Call, bodySchema: z.ZodType | undefined): Target[] {
  const targets: Target[] = [];
  for (const name of Object.keys(valid.params)) {
    targets.push({
      label: `path parameter ${name}`,
      field: name,
      arbitrary: paramArbitrary(name),
      call: (value) => ({ ...valid, params: { ...valid.params, [name]: value as string } }),
      wellFormed: (value) => wellFormedParam(name, value as string),
    });
  }
  const query = QUERY_SCHEMAS[row.route];
  for (const name of Object.keys(query?.shape ?? {})) {
    targets.push({
      label: `search parameter ${name}`,
      field: name,
      arbitrary: name === "run" ? hostileIdText : hostileText,
      call: (value) => {
        const search = new URLSearchParams(valid.search ?? "");
        search.set(name, value as string);
        return { ...valid, search: search.toString() };
      },
      wellFormed: name === "run" ? (value) => (value === "" ? null : isRowId(value as string) ? null : false) : undefined,
    });
  }
  if (bodySchema && valid.body !== undefined) {
    for (const at of bodyFields(bodySchema, valid.body)) {
      targets.push({ label: `body field ${at.join(".")}`, field: at.join("."), arbitrary: hostileJson, call: (value) => ({ ...valid, body: withField(valid.body, at, value) }) });
    }
    targets.push({ label: "the whole body", field: null, arbitrary: hostileJson, call: (value) => ({ ...valid, body: value }) });
  }
  return targets;
}

/** The routes whose handlers read search parameters must all have a schema above, or their parameters go unfuzzed. */
it("knows the search-parameter schema of every route that reads search parameters", () => {
  const reading = WORKSPACE_ROWS.filter((row) => /searchParams|parseSearch\(/.test(readFileSync(path.join(ROOT, row.route), "utf8"))).map((row) => row.route);
  expect([...new Set(reading)].filter((route) => !QUERY_SCHEMAS[route])).toEqual([]);
});

// Rows that publish, archive or delete go last: a well-formed id the fuzzer draws
// may name a real row of the world (archiving its panel, say), which is a fair
// call but would leave later rows nothing to prepare from.
const destructive = (row: WorkspaceRow) => row.method === "DELETE" || /\/(publish|archive)\/route\.ts$/.test(row.route);
const FUZZED_ROWS = [...WORKSPACE_ROWS.filter((r) => !r.variant && !destructive(r)), ...WORKSPACE_ROWS.filter((r) => !r.variant && destructive(r))];

for (const row of FUZZED_ROWS) {
  const where = `${row.method} ${urlOf(row.route)}`;
  const caller = DOCUMENTED_ROLES[row.capability][0] as Caller;
  describe(`${where} as ${caller}`, () => {
    it("answers every hostile path parameter, search parameter and body field with a 4xx naming it, never a 5xx", async () => {
      const valid = await row.prepare(world, caller);
      signInCaller(sessionMock, world, caller);
      const handler = (await handlerOf(row.route, row.method)) as unknown as { bodySchema?: z.ZodType };
      const targets = targetsOf(row, valid, handler.bodySchema);
      expect(targets.length).toBeGreaterThan(0);
      const failures: string[] = [];
      for (const target of targets) {
        // Every target is tried even when an earlier one fails, so one run lists every hole.
        const examples = ALWAYS.filter((v) => typeof v === "string" || /body/.test(target.label)).map((v): [unknown] => [v]);
        const property = fc.asyncProperty(target.arbitrary, async (value) => expectHandled(await send(row, target.call(value)), target, value, where));
        const failure = await falsify(target.label, property, RUNS, examples);
        if (failure) failures.push(failure);
      }
      if (failures.length) throw new Error(`${failures.length} of ${targets.length} targets failed (seed ${SEED}):\n\n${failures.join("\n\n")}`);
    });
  });
}

// ——— routes outside workspaces whose input is ours to parse

const unsubscribe = PUBLIC_ROWS.filter((r) => r.route === "app/api/digests/unsubscribe/route.ts");

/** JSON-body routes outside workspaces: who calls, and a body they would accept. */
const PUBLIC_BODIES: { route: string; valid: () => Record<string, unknown>; caller: () => Promise<{ id: number; email: string; name: string } | null> }[] = [
  { route: "app/api/invitations/accept/route.ts", valid: () => ({ token: "x".repeat(43), name: "Fuzzed Person", password: "a long enough password" }), caller: async () => null },
  { route: "app/api/workspaces/route.ts", valid: () => ({ name: "Fuzzed workspace", slug: `fuzz-${Date.now().toString(36)}` }), caller: () => makeUser("fuzz-creator") },
  { route: "app/api/account/password/route.ts", valid: () => ({ currentPassword: PASSWORD, newPassword: "another long password" }), caller: () => makeUser("fuzz-password") },
];

for (const entry of PUBLIC_BODIES) {
  describe(`POST ${urlOf(entry.route)}`, () => {
    it("answers a hostile value in every body field with a 4xx naming the field, never a 5xx", async () => {
      expect(PUBLIC_ROWS.some((r) => r.route === entry.route && r.method === "POST")).toBe(true);
      const handler = await handlerOf(entry.route, "POST");
      signedInAs(sessionMock, await entry.caller());
      const failures: string[] = [];
      for (const field of Object.keys(entry.valid())) {
        const target: Target = { label: `body field ${field}`, field, arbitrary: hostileJson, call: () => ({ params: {} }) };
        const property = fc.asyncProperty(hostileJson, async (value) => {
          const request = new Request(`http://tessera.test${urlOf(entry.route)}`, {
            method: "POST",
            headers: { "content-type": "application/json" },
            body: JSON.stringify({ ...entry.valid(), [field]: value }),
          });
          await expectHandled(await handler(request, { params: Promise.resolve({}) }), target, value, `POST ${urlOf(entry.route)}`, false);
        });
        const failure = await falsify(target.label, property, RUNS, ALWAYS.map((v): [unknown] => [v]));
        if (failure) failures.push(failure);
      }
      if (failures.length) throw new Error(`${failures.length} fields failed (seed ${SEED}):\n\n${failures.join("\n\n")}`);
    });
  });
}

describe("/api/digests/unsubscribe", () => {
  it("answers a hostile token (link or form) with a 4xx, never a 5xx", async () => {
    expect(unsubscribe.map((r) => r.method).sort()).toEqual(["GET", "POST"]);
    for (const row of unsubscribe) {
      const handler = await handlerOf(row.route, row.method);
      await expectHolds(
        `${row.method} token`,
        fc.asyncProperty(hostileText, fc.boolean(), async (token, inForm) => {
          const query = row.method === "GET" || !inForm ? `?${new URLSearchParams({ token })}` : "";
          const init: RequestInit =
            row.method === "POST" && inForm
              ? { method: "POST", headers: { "content-type": "application/x-www-form-urlencoded" }, body: new URLSearchParams({ token }).toString() }
              : { method: row.method };
          const response = await handler(new Request(`http://tessera.test/api/digests/unsubscribe${query}`, init), { params: Promise.resolve({}) });
          if (response.status >= 500) throw new Error(`${row.method} unsubscribe with token ${show(token)} answered ${response.status}`);
          expect(response.status).toBe(400);
        }),
        RUNS * 2,
      );
    }
  });
});

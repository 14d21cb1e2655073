import { z } from "zod";
import { createDocument, type ZodOpenApiOperationObject, type ZodOpenApiPathsObject, type ZodOpenApiResponsesObject } from "zod-openapi";
import { ACCOUNT_ROUTES } from "./account";
import { AREAS, errorBodySchema, errorsOf, rolesFor, SECURITY_SCHEMES, securityOf, slugParams, accessSentence, type ApiRoute } from "./define";
import { DIGESTS_ROUTES } from "./digests";
import { INTAKE_ROUTES } from "./intake";
import { REFERENCE_ROUTES } from "./reference";
import { REFORMS_ROUTES } from "./reforms";
import { RESULTS_ROUTES } from "./results";
import { RUNS_ROUTES } from "./runs";
import { TEAM_ROUTES } from "./team";

// The OpenAPI 3.1 document of Tessera's API, generated with zod-openapi from
// the route entries of each area file. To document a new route, add one entry
// to its area's list (see docs/api-reference.md); tests/unit/api-docs checks
// that every route handler under app/api is here and nothing else is.

/** Every documented route, in the order of AREAS. */
export const API_ROUTES: readonly ApiRoute[] = [
  ...RESULTS_ROUTES,
  ...RUNS_ROUTES,
  ...INTAKE_ROUTES,
  ...REFORMS_ROUTES,
  ...DIGESTS_ROUTES,
  ...TEAM_ROUTES,
  ...ACCOUNT_ROUTES,
  ...REFERENCE_ROUTES,
].sort((a, b) => AREAS.findIndex((x) => x.key === a.area) - AREAS.findIndex((x) => x.key === b.area));

/** Route handlers under app/api that are deliberately not in the document, with the reason. */
export const UNDOCUMENTED_ROUTES: readonly { file: string; reason: string }[] = [
  {
    file: "app/api/auth/[...nextauth]/route.ts",
    reason: "next-auth's own sign-in, sign-out, session and CSRF protocol for the browser; programs use personal API tokens instead.",
  },
];

export const API_TITLE = "Tessera API";
export const API_VERSION = "1";

const WORKSPACE_PREFIX = "/api/w/{slug}";

/** A stable operation id: "get" + the path's words ("/api/w/{slug}/runs/{runId}" → "getWSlugRunsRunId"). */
export function operationIdOf(route: Pick<ApiRoute, "method" | "path">): string {
  const words = route.path
    .replace(/^\/api\//, "")
    .split(/[^A-Za-z0-9]+/)
    .filter(Boolean)
    .map((w) => w[0].toUpperCase() + w.slice(1));
  return route.method.toLowerCase() + words.join("");
}

function pathParamsOf(route: ApiRoute): z.ZodObject | undefined {
  const inWorkspace = route.path.startsWith(`${WORKSPACE_PREFIX}/`) || route.path === WORKSPACE_PREFIX;
  if (inWorkspace && route.params) return slugParams.extend(route.params.shape);
  if (inWorkspace) return slugParams;
  return route.params;
}

const anyText = { type: "string" } as const;

function responsesOf(route: ApiRoute): ZodOpenApiResponsesObject {
  const responses: ZodOpenApiResponsesObject = {};
  for (const [status, answer] of Object.entries(route.answers)) {
    if (!answer) continue;
    if (answer.schema) {
      responses[status as `${1 | 2 | 3 | 4 | 5}${string}`] = { description: answer.description, content: { "application/json": { schema: answer.schema } } };
    } else if (answer.contentType) {
      const types = Array.isArray(answer.contentType) ? answer.contentType : [answer.contentType];
      responses[status as `${1 | 2 | 3 | 4 | 5}${string}`] = {
        description: answer.description,
        content: Object.fromEntries(types.map((type) => [type, { schema: type.startsWith("application/json") ? {} : anyText }])),
      };
    } else {
      responses[status as `${1 | 2 | 3 | 4 | 5}${string}`] = { description: answer.description };
    }
  }
  for (const [status, meaning] of errorsOf(route)) {
    const content = route.errorContentType ? { [route.errorContentType]: { schema: anyText } } : { "application/json": { schema: errorBodySchema } };
    responses[String(status) as `${1 | 2 | 3 | 4 | 5}${string}`] = { description: meaning, content };
  }
  return responses;
}

function operationOf(route: ApiRoute): ZodOpenApiOperationObject {
  const access = route.access;
  const roles = access.kind === "member" ? rolesFor(access.capability) : [];
  const path = pathParamsOf(route);
  const operation: ZodOpenApiOperationObject = {
    operationId: operationIdOf(route),
    tags: [AREAS.find((a) => a.key === route.area)?.title ?? route.area],
    summary: route.summary,
    description: [route.description, `**Who may call it.** ${accessSentence(access)}`].filter(Boolean).join("\n\n"),
    security: securityOf(access),
    requestParams: { ...(path ? { path } : {}), ...(route.query ? { query: route.query } : {}) },
    responses: responsesOf(route),
    "x-tessera-access": {
      kind: access.kind,
      ...(access.kind === "member" ? { capability: access.capability, roles, sessionOnly: access.sessionOnly ?? false } : {}),
      ...(access.kind !== "member" && access.rule ? { rule: access.rule } : {}),
    },
  };
  if (route.body) {
    operation.requestBody = { required: true, content: { [route.bodyContentType ?? "application/json"]: { schema: route.body } } };
  }
  return operation;
}

/** Builds the OpenAPI 3.1 document from `routes` (all of API_ROUTES by default). */
export function buildOpenApiDocument(routes: readonly ApiRoute[] = API_ROUTES) {
  const paths: ZodOpenApiPathsObject = {};
  for (const route of routes) {
    const item = (paths[route.path] ??= {});
    const method = route.method.toLowerCase() as "get" | "post" | "put" | "patch" | "delete";
    if (item[method]) throw new Error(`lib/api-docs: ${route.method} ${route.path} is described twice`);
    item[method] = operationOf(route);
  }
  return createDocument({
    openapi: "3.1.0",
    info: {
      title: API_TITLE,
      version: API_VERSION,
      description:
        "The HTTP API behind Tessera's screens. Workspace routes live under `/api/w/{slug}/` and answer as the workspace's screens do: " +
        "404 to anyone who is not a member, 403 to a member whose role is too small. Every error answers the same JSON body (`ErrorBody`).",
    },
    tags: AREAS.map((area) => ({ name: area.title, description: area.description })),
    components: { securitySchemes: { ...SECURITY_SCHEMES } },
    paths,
  });
}

export type OpenApiDocument = ReturnType<typeof buildOpenApiDocument>;

let built: OpenApiDocument | null = null;

/** The document of every route, built once per process. */
export function openApiDocument(): OpenApiDocument {
  built ??= buildOpenApiDocument();
  return built;
}

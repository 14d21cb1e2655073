import { NextRequest } from "next/server";
import { workAsyncStorage } from "next/dist/server/app-render/work-async-storage.external";
import { workUnitAsyncStorage } from "next/dist/server/app-render/work-unit-async-storage.external";
import { createWorkStore, type WorkStoreContext } from "next/dist/server/async-storage/work-store";
import { createRequestStoreForAPI } from "next/dist/server/async-storage/request-store";
import { getImplicitTags } from "next/dist/server/lib/implicit-tags";

// next-auth's own handler reads cookies() and headers() from Next's request
// scope, which only `next start` sets up. This builds the same two stores Next
// builds for a route handler, so the real handler runs in-process against the
// real database. Nothing in next-auth or Tessera is replaced.

type RouteHandler = (request: NextRequest, context: { params: Promise<Record<string, string | string[]>> }) => Promise<Response>;

/** Calls an App Router route handler as `next start` would, inside a request scope built from `request`. */
export async function callInRequestScope(
  handler: unknown,
  request: NextRequest,
  page: string,
  params: Record<string, string | string[]>,
): Promise<Response> {
  const context = {
    page,
    renderOpts: { cacheLifeProfiles: {}, staticPageGenerationTimeout: 60, cacheComponents: false, validationLevel: "none", experimental: {} },
    buildId: "in-process-test",
    deploymentId: "",
    previouslyRevalidatedTags: [],
  } as unknown as WorkStoreContext;
  const workStore = createWorkStore(context);
  const implicitTags = await getImplicitTags(page, request.nextUrl.pathname, null);
  const requestStore = createRequestStoreForAPI(request, { pathname: request.nextUrl.pathname, search: request.nextUrl.search }, implicitTags, undefined, undefined, undefined);
  return workAsyncStorage.run(workStore, () =>
    workUnitAsyncStorage.run(requestStore, () => (handler as RouteHandler)(request, { params: Promise.resolve(params) })),
  );
}

/** The cookies a response sets, as name → value (attributes dropped), and the raw Set-Cookie lines. */
export function setCookies(response: Response): { values: Record<string, string>; lines: string[] } {
  const lines = response.headers.getSetCookie();
  const values: Record<string, string> = {};
  for (const line of lines) {
    const [pair] = line.split(";");
    const at = pair.indexOf("=");
    values[pair.slice(0, at)] = pair.slice(at + 1);
  }
  return { values, lines };
}

export function cookieHeader(values: Record<string, string>): string {
  return Object.entries(values)
    .map(([k, v]) => `${k}=${v}`)
    .join("; ");
}

import { NextRequest } from "next/server";
// next/server exports only the type; the class is what next start hands proxy.ts.
import { NextFetchEvent } from "next/dist/server/web/spec-extension/fetch-event";
import proxy from "@/proxy";
import { STATIC_SECURITY_HEADERS } from "@/lib/security/headers";

// proxy.ts called in-process with a real NextRequest, as next start calls it.

/** The app's origin as the tests' requests name it. */
export const APP = () => process.env.NEXTAUTH_URL ?? "http://127.0.0.1:3100";

/** Hands proxy.ts a request for `pathAndQuery` on the app's origin and returns its answer. */
export async function callProxy(pathAndQuery: string, init: { method?: string; headers?: Record<string, string>; body?: string } = {}): Promise<{ request: NextRequest; response: Response }> {
  const request = new NextRequest(`${APP()}${pathAndQuery}`, {
    method: init.method ?? "GET",
    headers: { host: new URL(APP()).host, ...init.headers },
    body: init.body,
  });
  const response = await proxy(request, new NextFetchEvent({ request, page: "/", context: undefined }));
  if (!response) throw new Error(`proxy.ts answered nothing for ${pathAndQuery}`);
  return { request, response };
}

/** The page policy, the static security headers and Cache-Control: no-store, each named with `where` when missing. */
export function expectSecurityHeaders(response: Response, where: string): void {
  const got = (name: string) => response.headers.get(name);
  expect({ where, csp: got("content-security-policy") }).toEqual({ where, csp: expect.stringMatching(/script-src 'self' 'nonce-[^']+' 'strict-dynamic'/) });
  for (const { key, value } of STATIC_SECURITY_HEADERS) expect({ where, [key]: got(key) }).toEqual({ where, [key]: value });
  expect({ where, cacheControl: got("cache-control") }).toEqual({ where, cacheControl: "no-store" });
}

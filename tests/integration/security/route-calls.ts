import path from "node:path";
import type { SessionUser } from "@/lib/auth/session";
import type { Caller, World } from "./fixtures-world";
import type { Handler } from "./route-matrix-public";
import { urlOf, type Call, type Method, type WorkspaceRow } from "./route-matrix";

// Calling route handlers in-process, shared by the access matrix and the
// route fuzzer: the real handler module, a real Request, and only "who is
// signed in" stood in for. Each test file mocks @/lib/auth/session itself
// (jest.mock is hoisted per file) and hands its mock to signInCaller.

const ROOT = process.cwd();

type SessionMock = jest.MockedFunction<() => Promise<SessionUser | null>>;

export function signedInAs(session: SessionMock, user: { id: number; email: string; name: string } | null): void {
  session.mockResolvedValue(user ? ({ id: user.id, email: user.email, name: user.name } satisfies SessionUser) : null);
}

export function signInCaller(session: SessionMock, world: World, caller: Caller): void {
  if (caller === "signed-out") signedInAs(session, null);
  else if (caller === "outsider") signedInAs(session, world.outsider);
  else signedInAs(session, world.users[caller]);
}

const modules = new Map<string, Record<string, unknown>>();
export async function routeModule(route: string): Promise<Record<string, unknown>> {
  let loaded = modules.get(route);
  if (!loaded) {
    loaded = (await import(path.join(ROOT, route))) as Record<string, unknown>;
    modules.set(route, loaded);
  }
  return loaded;
}

export async function handlerOf(route: string, method: Method): Promise<Handler> {
  const handler = (await routeModule(route))[method];
  if (typeof handler !== "function") throw new Error(`${route} exports no ${method} handler`);
  return handler as Handler;
}

/**
 * The Request for `call` on `row`; path parameters are percent-encoded, as a browser would send them
 * (a lone surrogate cannot be, so the URL carries U+FFFD; the handler still gets the raw params).
 */
export function requestFor(row: Pick<WorkspaceRow, "route" | "method">, call: Call, rawBody?: string): Request {
  const pathname = urlOf(row.route).replace(/\[(\w+)\]/g, (_, name: string) => encodeURIComponent((call.params[name] ?? name).toWellFormed()));
  const url = `http://tessera.test${pathname}${call.search !== undefined ? `?${call.search}` : ""}`;
  const body = rawBody ?? (call.body === undefined ? undefined : JSON.stringify(call.body));
  return new Request(url, { method: row.method, headers: body === undefined ? {} : { "content-type": "application/json" }, body });
}

export async function send(row: Pick<WorkspaceRow, "route" | "method">, call: Call, rawBody?: string): Promise<Response> {
  const handler = await handlerOf(row.route, row.method);
  return handler(requestFor(row, call, rawBody), { params: Promise.resolve(call.params) });
}

/** The body of a response, as JSON when it is JSON; for messages in failures. */
export async function bodyOf(response: Response): Promise<unknown> {
  const text = await response.text();
  try {
    return JSON.parse(text);
  } catch {
    return text.slice(0, 300);
  }
}

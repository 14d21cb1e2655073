import { readdirSync } from "node:fs";
import path from "node:path";
import { MOVED_WORKSPACE_RESOURCES } from "@/lib/http/moved-paths";
import { requireTestServices } from "@/tests/helpers/env";
import { APP, callProxy, expectSecurityHeaders } from "./proxy-harness";

// Every workspace-scoped API answers under /api/w/<slug>/. The audit, intake,
// invitations and members routes moved there from /api/workspaces/<slug>/; for
// one release proxy.ts answers their old paths with a 308 (method and body
// preserved) to the new ones, carrying every security header. POST
// /api/workspaces (create a workspace) is not workspace-scoped and stays.

const ROOT = path.resolve(__dirname, "../../..");

beforeAll(() => requireTestServices());

async function run(pathAndQuery: string, init: { method?: string; headers?: Record<string, string>; body?: string } = {}): Promise<Response> {
  const { request, response } = await callProxy(pathAndQuery, init);
  const location = response.headers.get("location");
  // Absolute on the request's own origin (NextRequest writes 127.0.0.1 as localhost), which Next's
  // adapter turns into the path-only Location the browser gets.
  if (location !== null) expect({ pathAndQuery, origin: new URL(location).origin }).toEqual({ pathAndQuery, origin: new URL(request.url).origin });
  return response;
}


/** The path and query a redirect sends the browser to. */
function target(response: Response): string {
  const location = new URL(response.headers.get("location") ?? "", APP());
  return `${location.pathname}${location.search}`;
}

/** Route files under `dir`, as URL paths relative to it (`[versionId]/weights`). */
function routePaths(dir: string): string[] {
  const found: string[] = [];
  const walk = (relative: string) => {
    for (const entry of readdirSync(path.join(dir, relative), { withFileTypes: true })) {
      const next = relative ? `${relative}/${entry.name}` : entry.name;
      if (entry.isDirectory()) walk(next);
      else if (entry.name === "route.ts") found.push(relative);
    }
  };
  walk("");
  return found.sort();
}

describe("workspace APIs that moved to /api/w/<slug>/", () => {
  it("live only under app/api/w/[slug]/; app/api/workspaces keeps only the create route", () => {
    expect(routePaths(path.join(ROOT, "app/api/workspaces"))).toEqual([""]);
    for (const resource of MOVED_WORKSPACE_RESOURCES) {
      expect({ resource, routes: routePaths(path.join(ROOT, "app/api/w/[slug]", resource)).length > 0 }).toEqual({ resource, routes: true });
    }
  });

  it("an old path answers 308 with the new Location, query kept, with every security header", async () => {
    const response = await run("/api/workspaces/veldmark/intake/boundaries/12/weights?rule=knn%3A4");
    expect(response.status).toBe(308);
    expect(target(response)).toBe("/api/w/veldmark/intake/boundaries/12/weights?rule=knn%3A4");
    expectSecurityHeaders(response, "moved-path redirect");
    expect(await response.text()).toBe("");
  });

  it("every moved resource redirects, a same-site POST, PATCH or DELETE as well (308 keeps method and body)", async () => {
    const sameSite = { origin: APP(), "sec-fetch-site": "same-origin", "content-type": "application/json" };
    const calls: [string, string, string][] = [
      ["GET", "/api/workspaces/veldmark/audit", "/api/w/veldmark/audit"],
      ["GET", "/api/workspaces/veldmark/intake", "/api/w/veldmark/intake"],
      ["POST", "/api/workspaces/veldmark/intake/uploads", "/api/w/veldmark/intake/uploads"],
      ["POST", "/api/workspaces/veldmark/invitations", "/api/w/veldmark/invitations"],
      ["DELETE", "/api/workspaces/veldmark/invitations/3", "/api/w/veldmark/invitations/3"],
      ["GET", "/api/workspaces/veldmark/members", "/api/w/veldmark/members"],
      ["PATCH", "/api/workspaces/veldmark/members/7", "/api/w/veldmark/members/7"],
      ["PUT", "/api/workspaces/veldmark/intake/indicators/income%20per%20head", "/api/w/veldmark/intake/indicators/income%20per%20head"],
    ];
    for (const [method, from, to] of calls) {
      const response = await run(from, { method, headers: sameSite, body: method === "GET" || method === "DELETE" ? undefined : "{}" });
      expect({ method, from, status: response.status, location: target(response) }).toEqual({ method, from, status: 308, location: to });
    }
  });

  it("a trailing slash on an old path ends at the new path, each hop a 308", async () => {
    const first = await run("/api/workspaces/veldmark/members/");
    expect(first.status).toBe(308);
    expect(target(first)).toBe("/api/workspaces/veldmark/members");
    const second = await run(target(first));
    expect(second.status).toBe(308);
    expect(target(second)).toBe("/api/w/veldmark/members");
  });

  it("a cross-site POST to an old path is refused (403) before any redirect", async () => {
    const response = await run("/api/workspaces/veldmark/invitations", { method: "POST", headers: { origin: "https://attacker.example" }, body: "{}" });
    expect(response.status).toBe(403);
    expect(response.headers.get("location")).toBeNull();
    expectSecurityHeaders(response, "cross-site refusal on an old path");
  });

  it("POST /api/workspaces (create a workspace) and the new paths pass on unchanged", async () => {
    for (const [method, where] of [
      ["POST", "/api/workspaces"],
      ["GET", "/api/w/veldmark/members"],
      ["POST", "/api/w/veldmark/intake/uploads"],
    ] as const) {
      const response = await run(where, { method, headers: { origin: APP() }, body: method === "POST" ? "{}" : undefined });
      expect({ method, where, next: response.headers.get("x-middleware-next"), location: response.headers.get("location") }).toEqual({ method, where, next: "1", location: null });
    }
  });
});

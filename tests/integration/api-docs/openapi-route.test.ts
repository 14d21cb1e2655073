import { GET } from "@/app/api/openapi.json/route";
import { getSessionUser } from "@/lib/auth/session";
import { OPENAPI_CACHE_CONTROL } from "@/lib/security/headers";
import { requireTestServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";
import { callProxy } from "@/tests/integration/security/proxy-harness";

// GET /api/openapi.json: the OpenAPI document answers without a session, as
// JSON, and may be cached, through proxy.ts (no sign-in redirect, the
// security headers) and from its handler.
jest.mock("@/lib/auth/session", () => ({ getSessionUser: jest.fn() }));
const sessionMock = getSessionUser as jest.MockedFunction<typeof getSessionUser>;

beforeAll(async () => {
  await requireTestServices();
});

afterAll(async () => {
  await closeConnections();
});

describe("GET /api/openapi.json", () => {
  it("answers 200 with the OpenAPI 3.1 document as JSON, signed out", async () => {
    sessionMock.mockResolvedValue(null);
    const response = GET();
    expect(response.status).toBe(200);
    expect(response.headers.get("content-type")).toMatch(/^application\/json/);
    expect(response.headers.get("cache-control")).toBe(OPENAPI_CACHE_CONTROL);
    const doc = (await response.json()) as { openapi: string; info: { title: string }; paths: Record<string, unknown> };
    expect(doc.openapi).toBe("3.1.0");
    expect(doc.info.title).toBe("Tessera API");
    expect(Object.keys(doc.paths)).toEqual(expect.arrayContaining(["/api/w/{slug}/runs", "/api/openapi.json"]));
    expect(sessionMock).not.toHaveBeenCalled();
  });

  it("passes proxy.ts without a session cookie: no sign-in redirect, no cross-site refusal, cacheable with the security headers", async () => {
    const { response } = await callProxy("/api/openapi.json");
    expect(response.status).toBe(200);
    expect(response.headers.get("location")).toBeNull();
    expect(response.headers.get("cache-control")).toBe(OPENAPI_CACHE_CONTROL);
    expect(response.headers.get("content-security-policy")).toMatch(/nonce-/);
    expect(response.headers.get("x-content-type-options")).toBe("nosniff");
  });

  it("stays no-store for every other API path", async () => {
    const { response } = await callProxy("/api/w/veldmark/catalogue");
    expect(response.headers.get("cache-control")).toBe("no-store");
  });
});

import fc from "fast-check";
import { safeCallbackPath, WORKSPACE_HOME } from "@/lib/auth/callback";

const APP = "https://tessera.example.org";

describe("the callback after sign-in stays on this site", () => {
  it.each([
    "//evil.example",
    "//evil.example/w/x/desk",
    "/\\evil.example",
    "\\\\evil.example",
    "\\/evil.example",
    "///evil.example",
    "////evil.example",
    "/%2F%2Fevil.example",
    "/%2f%2fevil.example",
    "/%252F%252Fevil.example",
    "%2F%2Fevil.example",
    "/%5Cevil.example",
    "/%5C%5Cevil.example",
    "/.//evil.example",
    "/./%2F/evil.example",
    "https:evil.example",
    "https:/evil.example",
    "http:evil.example",
    "https://evil.example/w/x/desk",
    "https://tessera.example.org.evil.example/",
    "https://tessera.example.org@evil.example/",
    "http://tessera.example.org/w/x/desk",
    "https://tessera.example.org:8443/w/x/desk",
    "https://tessera.example.org//evil.example",
    "javascript:alert(1)",
    "JavaScript:alert(1)",
    "data:text/html,<script>alert(1)</script>",
    "/\t/evil.example",
    "/\n/evil.example",
    "\t//evil.example",
    " //evil.example",
    "/%09/evil.example",
    "/%0a/evil.example",
    "/w/x/desk\r\nSet-Cookie: x=1",
    "w/x/desk",
    "evil.example",
    "",
    "/%E0%A4%A",
  ])("replaces %j with the workspace home", (value) => {
    expect(safeCallbackPath(value, APP)).toBe(WORKSPACE_HOME);
  });

  it.each([
    ["/w/veldmark/desk", "/w/veldmark/desk"],
    ["/w/veldmark/catalogue?indicator=GDP&period=2020", "/w/veldmark/catalogue?indicator=GDP&period=2020"],
    ["/invite/abc_DEF-123", "/invite/abc_DEF-123"],
    ["/sign-in?signedOut=1", "/sign-in?signedOut=1"],
    ["https://tessera.example.org/w/veldmark/runs", "/w/veldmark/runs"],
    ["/w/veldmark/desk#top", "/w/veldmark/desk"],
    ["/w/a/../b/desk", "/w/b/desk"],
    ["/", "/"],
  ])("keeps the local path %j as %j", (value, expected) => {
    expect(safeCallbackPath(value, APP)).toBe(expected);
  });

  it("takes the first of repeated query parameters and ignores anything that is not a string", () => {
    expect(safeCallbackPath(["/w/a/desk", "//evil.example"], APP)).toBe("/w/a/desk");
    expect(safeCallbackPath(["//evil.example", "/w/a/desk"], APP)).toBe(WORKSPACE_HOME);
    expect(safeCallbackPath(undefined, APP)).toBe(WORKSPACE_HOME);
    expect(safeCallbackPath(null, APP)).toBe(WORKSPACE_HOME);
    expect(safeCallbackPath(42, APP)).toBe(WORKSPACE_HOME);
    expect(safeCallbackPath("/w/a/desk", "not a url")).toBe(WORKSPACE_HOME);
  });

  /** What a browser does with the result: resolve it against the page it is on. */
  function expectSameOriginPath(result: string): void {
    expect(result.startsWith("/")).toBe(true);
    expect(result.startsWith("//")).toBe(false);
    expect(result.startsWith("/\\")).toBe(false);
    expect(new URL(result, APP).origin).toBe(APP);
    // Decoded (as a careless proxy or client might) it still does not name another host.
    let decoded = result;
    for (let i = 0; i < 4; i++) {
      try {
        decoded = decodeURIComponent(decoded);
      } catch {
        break;
      }
      expect(/^[/\\][/\\]/.test(decoded.replace(/[\s\u0000-\u001f]/g, ""))).toBe(false);
    }
    // Stable: passing the result through again changes nothing.
    expect(safeCallbackPath(result, APP)).toBe(result);
  }

  it("turns any string into a same-origin path starting with a single slash", () => {
    fc.assert(
      fc.property(fc.string({ unit: "binary", maxLength: 80 }), (value) => expectSameOriginPath(safeCallbackPath(value, APP))),
      { numRuns: 1500 },
    );
  });

  it("turns any string built from URL-ish pieces into a same-origin path starting with a single slash", () => {
    const piece = fc.constantFrom(
      "/", "//", "\\", "%2F", "%2f", "%5C", "%25", "2F", ".", "..", ":", "@", "?", "#", "\t", "\n", " ",
      "https:", "http:", "javascript:", "evil.example", "tessera.example.org", "https://tessera.example.org", "w", "desk",
    );
    fc.assert(
      fc.property(fc.array(piece, { maxLength: 8 }).map((parts) => parts.join("")), (value) =>
        expectSameOriginPath(safeCallbackPath(value, APP)),
      ),
      { numRuns: 3000 },
    );
  });
});

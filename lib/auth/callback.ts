// Where to go after signing in. Pure, with no server imports: the sign-in
// page, next-auth's redirect callback (lib/auth/options.ts) and the sign-in
// form in the browser all pass the callback through this one function, so a
// link like /sign-in?callbackUrl=//evil.example cannot send a freshly
// signed-in user to another site (OWASP Unvalidated Redirects and Forwards
// Cheat Sheet: allow only local paths, and check what the URL resolves to,
// not how it is spelled).

/** "/" redirects a signed-in user to their first workspace (app/page.tsx). */
export const WORKSPACE_HOME = "/";

const MAX_CALLBACK_LENGTH = 2048;

// Control characters, whitespace (browsers silently drop tabs and newlines
// inside URLs, so "/\t/evil" becomes "//evil") and backslashes (which the URL
// parser reads as "/" for http): none is ever part of a path Tessera sends.
const FORBIDDEN = /[\s\u0000-\u001f\u007f-\u009f\\]/;

/** Does this spelling begin like a network-path reference ("//host", "/\host")? */
function startsLikeAnotherHost(path: string): boolean {
  return /^[/\\][/\\]/.test(path.replace(/[\s\u0000-\u001f\u007f-\u009f]/g, ""));
}

/**
 * The path a percent-encoded path may turn into after one or more rounds of
 * decoding, for a client or proxy that decodes before redirecting.
 * Null when a round fails (malformed escapes are not a path we produced).
 */
function decodedForms(path: string): string[] | null {
  const forms = [path];
  let current = path;
  for (let round = 0; round < 4; round++) {
    let next: string;
    try {
      next = decodeURIComponent(current);
    } catch {
      return null;
    }
    if (next === current) break;
    forms.push(next);
    current = next;
  }
  return forms;
}

function originOf(appUrl: string): string | null {
  try {
    const url = new URL(appUrl);
    return url.protocol === "http:" || url.protocol === "https:" ? url.origin : null;
  } catch {
    return null;
  }
}

/**
 * A same-origin path ("/…", never "//…" or "/\…") to go to after signing in,
 * or WORKSPACE_HOME when `value` is missing, malformed, or resolves to any
 * other origin. Accepts a path beginning with one "/" or an absolute http(s)
 * URL on the app's own origin (next-auth hands its redirect callback those);
 * everything else — scheme-relative "//host", "https:host", "javascript:",
 * encoded slashes, control characters — becomes WORKSPACE_HOME.
 */
export function safeCallbackPath(value: unknown, appUrl: string): string {
  const raw = Array.isArray(value) ? (value as unknown[])[0] : value;
  if (typeof raw !== "string" || raw === "" || raw.length > MAX_CALLBACK_LENGTH) return WORKSPACE_HOME;
  if (FORBIDDEN.test(raw)) return WORKSPACE_HOME;
  const origin = originOf(appUrl);
  if (!origin) return WORKSPACE_HOME;

  const isPath = raw.startsWith("/") && !startsLikeAnotherHost(raw);
  const isAbsoluteHere = /^https?:\/\//i.test(raw);
  if (!isPath && !isAbsoluteHere) return WORKSPACE_HOME;

  let resolved: URL;
  try {
    resolved = isPath ? new URL(raw, origin) : new URL(raw);
  } catch {
    return WORKSPACE_HOME;
  }
  if (resolved.origin !== origin) return WORKSPACE_HOME;

  // The fragment never reaches the server; dropping it keeps the result a plain path.
  const path = resolved.pathname + resolved.search;
  if (!path.startsWith("/") || FORBIDDEN.test(path)) return WORKSPACE_HOME;
  // "/.//evil" and "https://app//evil" resolve to the path "//evil", which a
  // browser would read as another host; so would "/%2F%2Fevil" after decoding.
  const forms = decodedForms(path);
  if (!forms || forms.some((form) => startsLikeAnotherHost(form))) return WORKSPACE_HOME;
  return path;
}

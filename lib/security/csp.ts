/**
 * The Content-Security-Policy of every response, built per request by proxy.ts
 * (a fresh nonce each time). Pure: no imports from next or the environment, so
 * a unit test can check each directive.
 *
 * Why each source is there:
 * - script-src: the per-request nonce plus 'strict-dynamic'. Next.js reads the
 *   nonce from the request's CSP header while it renders and puts it on its own
 *   scripts; chunks those scripts load later are trusted through
 *   'strict-dynamic'. No host list and no 'unsafe-inline' for scripts.
 *   `next dev` needs 'unsafe-eval' (React rebuilds server stacks with eval);
 *   it is added only in development.
 * - style-src 'unsafe-inline': ECharts and AG Grid position tooltips, grid rows
 *   and chart containers with inline style attributes and AG Grid injects its
 *   theme as <style> elements; the unsubscribe page and the mail previews
 *   (sandboxed srcdoc frames, which inherit this policy) use inline styles too.
 *   A nonce here would make browsers ignore 'unsafe-inline', so style-src has
 *   none. Styles cannot run code; scripts stay nonce-only.
 * - connect-src: the app itself and the S3 endpoint, which receives the
 *   browser's presigned PUT uploads directly.
 * - img-src data: blob: ECharts' SVG renderer and the digest chart use data
 *   URLs.
 * - frame-ancestors 'none' (with X-Frame-Options DENY from next.config.mjs):
 *   no page may be framed by another site (clickjacking).
 */

export interface CspOptions {
  /** Base64 nonce for this response; at least 16 random bytes. */
  nonce: string;
  /** `next dev`: adds 'unsafe-eval' and the hot-reload websocket. */
  development: boolean;
  /** Origin the browser uploads to (presigned PUT), e.g. http://127.0.0.1:4569. */
  uploadOrigin: string | null;
  /** https deployments also get upgrade-insecure-requests. */
  https: boolean;
}

const NONCE = /^[A-Za-z0-9+/_-]{16,}={0,2}$/;

export function contentSecurityPolicy(options: CspOptions): string {
  if (!NONCE.test(options.nonce)) throw new Error(`CSP nonce "${options.nonce}" is not base64 of at least 12 bytes`);
  const dev = options.development;
  const directives: [string, ...string[]][] = [
    ["default-src", "'self'"],
    ["script-src", "'self'", `'nonce-${options.nonce}'`, "'strict-dynamic'", ...(dev ? ["'unsafe-eval'"] : [])],
    ["style-src", "'self'", "'unsafe-inline'"],
    ["img-src", "'self'", "data:", "blob:"],
    ["font-src", "'self'"],
    ["connect-src", "'self'", ...(options.uploadOrigin ? [options.uploadOrigin] : []), ...(dev ? ["ws:"] : [])],
    ["frame-src", "'self'"],
    ["worker-src", "'self'", "blob:"],
    ["object-src", "'none'"],
    ["base-uri", "'none'"],
    ["form-action", "'self'"],
    ["frame-ancestors", "'none'"],
  ];
  if (options.https) directives.push(["upgrade-insecure-requests"]);
  return directives.map((d) => d.join(" ")).join("; ");
}

/**
 * The origin browsers PUT uploads to: the S3 endpoint, or `bucket.host` when
 * S3 uses virtual-hosted addressing. Null when the endpoint is not a URL.
 */
export function uploadOrigin(endpoint: string | undefined, bucket: string | undefined, forcePathStyle: boolean): string | null {
  if (!endpoint) return null;
  try {
    const url = new URL(endpoint);
    if (!forcePathStyle && bucket) url.hostname = `${bucket}.${url.hostname}`;
    return url.origin;
  } catch {
    return null;
  }
}

/** 16 random bytes, base64: unguessable and fresh for every response. */
export function newNonce(): string {
  const bytes = new Uint8Array(16);
  crypto.getRandomValues(bytes);
  return btoa(String.fromCharCode(...bytes));
}

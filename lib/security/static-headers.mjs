// The security headers that never change per request. Plain JavaScript so
// next.config.mjs (static files, which proxy.ts does not see) and proxy.ts
// (pages, API answers and every redirect it returns) share one list.
// OWASP HTTP Headers Cheat Sheet: nosniff, framing refused (with CSP
// frame-ancestors), a referrer policy that keeps paths on this origin, no
// powerful features, and a cross-origin opener policy that isolates the window.

/** @type {ReadonlyArray<{ key: string; value: string }>} */
export const STATIC_SECURITY_HEADERS = Object.freeze([
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
  { key: "Permissions-Policy", value: "accelerometer=(), camera=(), geolocation=(), gyroscope=(), magnetometer=(), microphone=(), payment=(), usb=()" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
]);

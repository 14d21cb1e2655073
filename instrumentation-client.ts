import { z } from "zod";

// Runs in the browser before React hydrates (Next.js file convention).
// zod 4 checks whether it may compile parsers with `new Function("")` the first
// time it parses an object. The Content-Security-Policy (lib/security/csp.ts)
// forbids eval, so that check is refused and reported as a violation on every
// page with a form; zod would then fall back anyway. Saying so up front keeps
// the policy strict and the pages free of violations.
z.config({ jitless: true });

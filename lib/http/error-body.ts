import { z } from "zod";

/**
 * The JSON body of every error answer (`jsonError` in ./errors.ts, reached
 * through `errorResponse` in ./route.ts): a plain sentence, and, for input
 * errors, the field it is about and every issue zod found. An outage (503)
 * adds `retryable: true`; a few errors add their own details (a refused
 * upload its `usedBytes` and `quotaBytes`). Described here as a schema so the API reference
 * documents exactly this one shape.
 */
export const errorBodySchema = z
  .looseObject({
    error: z.string().meta({ description: "What was wrong and what to do, in one or two plain sentences." }),
    field: z.string().nullable().optional().meta({ description: "The body field, path or search parameter the error is about (`a.b` for nested fields); null when none is." }),
    issues: z
      .array(z.object({ field: z.string(), message: z.string() }))
      .optional()
      .meta({ description: "Every problem found in a body, path or query that failed its schema (400)." }),
    retryable: z.boolean().optional().meta({ description: "Present (true) when a service was briefly unavailable (503): try again." }),
  })
  .meta({ id: "ErrorBody", description: "The one shape of every error answer." });

export type ErrorBody = z.infer<typeof errorBodySchema>;

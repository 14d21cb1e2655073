import { z } from "zod";

// Answers of the account routes, as zod schemas for the API reference (lib/api-docs).

export const passwordChangedResponseSchema = z
  .object({ changed: z.literal(true), email: z.string() })
  .meta({ description: "The password is changed and every session issued before has ended, this one included: sign in again." });

import { z } from "zod";

// Answers of the workspace routes, as zod schemas for the API reference (lib/api-docs).

export const workspaceCreatedResponseSchema = z.object({ slug: z.string(), name: z.string() });

import { z } from "zod";
import { API_TOKEN_EXPIRY_DAYS } from "@/lib/auth/api-token-format";
import { ROLES } from "@/lib/auth/roles";
import { text, uuidText } from "@/lib/http/params";

// Personal API tokens: the bodies and answers of GET/POST /api/w/[slug]/tokens,
// DELETE /api/w/[slug]/tokens/[tokenId] and GET /api/w/[slug]/team-tokens.
// Shared by the route handlers and the Account and Team screens.

export const API_TOKEN_NAME_MAX = 100;

export const createTokenSchema = z.object({
  name: text({ min: 1, max: API_TOKEN_NAME_MAX, empty: "Give the token a name, such as the script that will use it.", tooLong: `Use at most ${API_TOKEN_NAME_MAX} characters for the name.` }),
  role: z.enum(ROLES, { error: "Choose one of: manager, steward, economist, subscriber." }),
  expiresInDays: z.union(
    API_TOKEN_EXPIRY_DAYS.map((days) => z.literal(days)),
    { error: `Choose an expiry of ${API_TOKEN_EXPIRY_DAYS.join(", ")} days.` },
  ),
});
export type CreateTokenInput = z.infer<typeof createTokenSchema>;

export const tokenParamsSchema = z.object({ tokenId: uuidText() });

export const API_TOKEN_STATES = ["active", "expired", "revoked"] as const;
export type ApiTokenState = (typeof API_TOKEN_STATES)[number];

/** One token as lists show it; never its secret or hash. Times are ISO 8601. */
export const apiTokenSchema = z.object({
  id: z.string(),
  name: z.string(),
  role: z.enum(ROLES),
  state: z.enum(API_TOKEN_STATES),
  createdAt: z.string(),
  expiresAt: z.string(),
  lastUsedAt: z.string().nullable(),
  lastAddress: z.string().nullable(),
  revokedAt: z.string().nullable(),
  owner: z.object({ id: z.number(), name: z.string(), email: z.string() }),
});
export type ApiTokenView = z.infer<typeof apiTokenSchema>;

export const tokenListSchema = z.object({ tokens: z.array(apiTokenSchema) });
export type TokenList = z.infer<typeof tokenListSchema>;

/** The answer to a creation: the token itself, shown this once, and its row. */
export const createdTokenSchema = z.object({ token: z.string(), apiToken: apiTokenSchema });
export type CreatedToken = z.infer<typeof createdTokenSchema>;

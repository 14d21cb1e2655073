import { z } from "zod";
import { DIGEST_CADENCES, DIGEST_EMPTY_POLICIES, DIGEST_SCOPES, DIGEST_THRESHOLDS } from "@/models/digest-types";

// Answers of the digest routes, as zod schemas for the API reference (lib/api-docs).

export const subscriptionViewSchema = z
  .object({
    id: z.number().int(),
    userId: z.number().int(),
    workspaceId: z.number().int(),
    cadence: z.enum(DIGEST_CADENCES),
    scope: z.enum(DIGEST_SCOPES),
    indicatorCodes: z.array(z.string()),
    threshold: z.enum(DIGEST_THRESHOLDS),
    emptyPolicy: z.enum(DIGEST_EMPTY_POLICIES),
    active: z.boolean(),
    unsubscribedAt: z.string().nullable(),
    lastDigestAt: z.string().nullable(),
    lastRunId: z.number().int().nullable(),
  })
  .meta({ id: "DigestSubscription" });

export const ownDigestResponseSchema = z.object({
  subscription: subscriptionViewSchema.nullable(),
  indicators: z.array(z.looseObject({ code: z.string(), label: z.string() })).meta({ description: "Indicators the member may pick." }),
  deliveries: z.array(z.looseObject({})).meta({ description: "Delivery history of the subscription, newest first." }),
  canSeeSubscribers: z.boolean(),
});

export const savedDigestResponseSchema = z.object({ subscription: subscriptionViewSchema.nullable() });

const decision = z.union([
  z.object({ send: z.literal(true), to: z.string(), sentence: z.string() }),
  z.object({ send: z.literal(false), reason: z.string(), sentence: z.string() }),
]);

export const digestPreviewResponseSchema = z.object({
  subject: z.string().nullable(),
  html: z.string().nullable(),
  text: z.string().nullable(),
  empty: z.boolean(),
  runId: z.number().int().nullable(),
  previousRunId: z.number().int().nullable(),
  baseline: z.unknown(),
  decision,
});

export const sendNowResponseSchema = z.object({
  status: z.enum(["queued", "sent", "skipped", "retrying", "duplicate"]),
  sentence: z.string().meta({ description: "What happened, as the screen shows it." }),
  idempotencyKey: z.string(),
});

export const subscribersResponseSchema = z.object({
  subscribers: z.array(
    z.object({
      name: z.string(),
      email: z.string(),
      role: z.string(),
      cadence: z.enum(DIGEST_CADENCES),
      scope: z.enum(DIGEST_SCOPES),
      indicatorCodes: z.array(z.string()),
      threshold: z.enum(DIGEST_THRESHOLDS),
      active: z.boolean(),
      lastDigestAt: z.string().nullable(),
    }),
  ),
});

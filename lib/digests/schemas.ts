import { z } from "zod";
import { text } from "@/lib/http/params";
import { DIGEST_CADENCES, DIGEST_EMPTY_POLICIES, DIGEST_SCOPES, DIGEST_THRESHOLDS } from "@/models/digest-types";

/** The member's own subscription as the Digests screen edits it (PUT body). */
export const subscriptionInputSchema = z
  .object({
    cadence: z.enum(DIGEST_CADENCES, { message: "Choose after each run, weekly or monthly." }),
    scope: z.enum(DIGEST_SCOPES, { message: "Choose all indicators or a chosen set." }),
    indicatorCodes: z.array(text({ min: 1, max: 120 })).max(200).default([]),
    threshold: z.enum(DIGEST_THRESHOLDS, { message: "Choose every change or only changes in significance class." }),
    emptyPolicy: z.enum(DIGEST_EMPTY_POLICIES, { message: "Choose whether to skip or to say that nothing changed." }),
    active: z.boolean().default(true),
  })
  .refine((s) => s.scope === "all" || s.indicatorCodes.length > 0, { message: "Pick at least one indicator, or follow all of them.", path: ["indicatorCodes"] });

export type SubscriptionInput = z.output<typeof subscriptionInputSchema>;

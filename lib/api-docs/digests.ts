import { subscriptionInputSchema } from "@/lib/digests/schemas";
import { digestPreviewResponseSchema, ownDigestResponseSchema, savedDigestResponseSchema, sendNowResponseSchema, subscribersResponseSchema } from "@/lib/digests/responses";
import { member, type ApiRoute } from "./define";

export const DIGESTS_ROUTES: ApiRoute[] = [
  {
    area: "digests",
    method: "GET",
    path: "/api/w/{slug}/digests",
    summary: "Your own digest subscription",
    access: member("digests.subscribe"),
    answers: { 200: { description: "Your subscription (null if none), the indicators you may pick and the delivery history.", schema: ownDigestResponseSchema } },
  },
  {
    area: "digests",
    method: "PUT",
    path: "/api/w/{slug}/digests",
    summary: "Save your own digest subscription",
    description: "Creates or updates the caller's subscription, never anyone else's.",
    access: member("digests.subscribe"),
    body: subscriptionInputSchema,
    answers: { 200: { description: "The subscription as saved.", schema: savedDigestResponseSchema } },
  },
  {
    area: "digests",
    method: "GET",
    path: "/api/w/{slug}/digests/preview",
    summary: "Preview the digest you would get now",
    description: "Prepared by the same code as the send; nothing is sent or recorded.",
    access: member("digests.subscribe"),
    answers: { 200: { description: "The rendered mail and whether it would be sent.", schema: digestPreviewResponseSchema } },
    errors: { 404: "You have no digest subscription in this workspace yet." },
  },
  {
    area: "digests",
    method: "POST",
    path: "/api/w/{slug}/digests/send-now",
    summary: "Send yourself the digest now",
    access: member("digests.subscribe"),
    answers: {
      200: { description: "Handled at once: sent, skipped (with the reason) or a duplicate.", schema: sendNowResponseSchema },
      202: { description: "Queued, or the mail server refused and it will be tried again.", schema: sendNowResponseSchema },
    },
    errors: { 409: "Subscribe first (and keep the subscription active).", 429: "Too many sends in a short time." },
  },
  {
    area: "digests",
    method: "GET",
    path: "/api/w/{slug}/digests/subscribers",
    summary: "Who subscribes to what",
    access: member("team.manage"),
    answers: { 200: { description: "Current members' subscriptions.", schema: subscribersResponseSchema } },
  },
];

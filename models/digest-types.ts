// Value sets of the digest tables (migrations/20261201000600-create-digests.js).
export const DIGEST_CADENCES = ["after_run", "weekly", "monthly"] as const;
export type DigestCadence = (typeof DIGEST_CADENCES)[number];
export const DIGEST_SCOPES = ["all", "chosen"] as const;
export type DigestScope = (typeof DIGEST_SCOPES)[number];
export const DIGEST_THRESHOLDS = ["every_change", "class_changes"] as const;
export type DigestThreshold = (typeof DIGEST_THRESHOLDS)[number];
export const DIGEST_EMPTY_POLICIES = ["skip", "say_so"] as const;
export type DigestEmptyPolicy = (typeof DIGEST_EMPTY_POLICIES)[number];
export const DIGEST_DELIVERY_STATUSES = ["queued", "sending", "sent", "failed", "skipped"] as const;
export type DigestDeliveryStatus = (typeof DIGEST_DELIVERY_STATUSES)[number];

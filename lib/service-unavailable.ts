// Outages of a backing service, as the user hears of them. No imports: the
// error screens (client components) use this too.
//
// Next.js replaces a server error's message in production but keeps a
// `digest` the error already carries, so lib/db.ts and lib/storage mark
// outage errors with one of these digests and the error screens read it.

export type UnavailableService = "database" | "file-store";

const PREFIX = "tessera-unavailable:";

export const UNAVAILABLE_TITLES: Record<UnavailableService, string> = {
  database: "Tessera cannot reach its database",
  "file-store": "Tessera cannot reach its file store",
};

export const UNAVAILABLE_MESSAGES: Record<UnavailableService, string> = {
  database: "The database is not answering (it may be restarting). Try again in a moment; if it keeps happening, tell your manager.",
  "file-store": "The file store is not answering. Try again in a few minutes; if it keeps happening, tell your manager.",
};

export function unavailableDigest(service: UnavailableService): string {
  return `${PREFIX}${service}`;
}

/** The service an error screen's digest names, or null for any other error. */
export function unavailableService(digest: string | undefined): UnavailableService | null {
  if (!digest?.startsWith(PREFIX)) return null;
  const service = digest.slice(PREFIX.length);
  return service === "database" || service === "file-store" ? service : null;
}

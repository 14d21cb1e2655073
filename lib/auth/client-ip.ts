// Its own module: the guard needs it without importing the next-auth settings,
// which read the configuration when they load.

/**
 * The client address the sign-in throttle counts against. `next start` keeps
 * an X-Forwarded-For the client sent and only fills it from the socket when it
 * is missing, and a reverse proxy appends the address it saw. So the last
 * entry is the one a proxy (or Next, when there is none) vouches for; earlier
 * entries are whatever the client wrote and would let a guesser pick a fresh
 * "address" for every attempt.
 */
export function clientIp(headers: Record<string, string | string[] | undefined> | Headers | undefined): string {
  const read = (name: string): string | undefined => {
    if (!headers) return undefined;
    if (headers instanceof Headers) return headers.get(name) ?? undefined;
    const value = headers[name];
    return Array.isArray(value) ? value.join(",") : value;
  };
  const forwarded = read("x-forwarded-for")?.split(",").map((part) => part.trim()).filter(Boolean).at(-1);
  return (forwarded || read("x-real-ip")?.trim() || "unknown").slice(0, 64);
}

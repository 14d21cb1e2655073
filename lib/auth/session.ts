import { getServerSession } from "next-auth";
import { DatabaseUnavailableError, markIfDatabaseUnavailable } from "@/lib/db";
import { authOptions } from "./options";

export type SessionUser = { id: number; email: string; name: string };

/**
 * The signed-in user from the JWT session cookie, or null. A session that has
 * ended (its version is no longer the user's: signed out, removed from the
 * last workspace, password changed) is null too: the session callback in
 * lib/auth/options.ts checks it with one primary-key lookup on every call.
 * Membership checks happen in the guard.
 */
export async function getSessionUser(): Promise<SessionUser | null> {
  const session = await getServerSession(authOptions);
  if (session?.outage) throw markIfDatabaseUnavailable(new DatabaseUnavailableError("The database did not answer while the session was checked."));
  const user = session?.user;
  if (!user || typeof user.id !== "number") return null;
  return { id: user.id, email: user.email ?? "", name: user.name ?? "" };
}

import { getServerSession } from "next-auth";
import { authOptions } from "./options";

export type SessionUser = { id: number; email: string; name: string };

/** The signed-in user from the JWT session cookie, or null. Database checks happen in the guard. */
export async function getSessionUser(): Promise<SessionUser | null> {
  const session = await getServerSession(authOptions);
  const user = session?.user;
  if (!user || typeof user.id !== "number") return null;
  return { id: user.id, email: user.email ?? "", name: user.name ?? "" };
}

import { forbidden, notFound, redirect } from "next/navigation";
import { AccessError } from "./errors";

// Pages turn guard failures into navigation with the right HTTP status:
// 401 → sign-in (coming back here afterwards), 404 → the not-found page,
// 403 → app/forbidden.tsx through forbidden() (next.config: authInterrupts).
// The status is only real because no loading.tsx wraps the workspace pages:
// a streamed fallback would have sent 200 before the guard ran.

export async function guardPage<T>(path: string, load: () => Promise<T>): Promise<T> {
  try {
    return await load();
  } catch (error) {
    if (error instanceof AccessError) {
      if (error.status === 401) redirect(`/sign-in?callbackUrl=${encodeURIComponent(path)}`);
      if (error.status === 404) notFound();
      if (error.status === 403) forbidden();
    }
    throw error;
  }
}

import { notFound, redirect } from "next/navigation";
import { AccessError } from "./errors";

// Pages turn guard failures into navigation: 401 → sign-in (coming back here
// afterwards), 404 → the not-found page, 403 → the caller renders <Forbidden/>.
// (A real 403 status would need Next's experimental authInterrupts.)

export type PageResult<T> = { ok: true; value: T } | { ok: false; status: 403; message: string };

export async function guardPage<T>(path: string, load: () => Promise<T>): Promise<PageResult<T>> {
  try {
    return { ok: true, value: await load() };
  } catch (error) {
    if (error instanceof AccessError) {
      if (error.status === 401) redirect(`/sign-in?callbackUrl=${encodeURIComponent(path)}`);
      if (error.status === 404) notFound();
      return { ok: false, status: 403, message: error.message };
    }
    throw error;
  }
}

// The browser's side of Tessera's JSON API, shared by every screen's queries
// and mutations. Routes answer errors as `{ error, field? }` (lib/http/errors.ts);
// apiFetch throws them as ApiError so forms can show the sentence beside the field.
// No server imports: client components read this file.

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly field: string | null = null,
  ) {
    super(message);
  }
}

export async function apiFetch<T>(url: string, init?: RequestInit): Promise<T> {
  const response = await fetch(url, {
    ...init,
    headers: { "content-type": "application/json", ...(init?.headers ?? {}) },
    credentials: "same-origin",
  });
  if (response.status === 204) return undefined as T;
  const body: unknown = await response.json().catch(() => ({}));
  if (!response.ok) {
    const b = body as { error?: string; field?: string | null };
    throw new ApiError(response.status, b.error ?? "The request did not work. Try again.", b.field ?? null);
  }
  return body as T;
}

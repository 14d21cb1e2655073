import { queryOptions } from "@tanstack/react-query";
import type { AuditRow, InvitationRow, MemberRow } from "@/lib/auth/team";

// One options factory per resource; mutations invalidate these keys.

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

export const teamKeys = {
  all: (slug: string) => ["team", slug] as const,
  members: (slug: string) => ["team", slug, "members"] as const,
  invitations: (slug: string) => ["team", slug, "invitations"] as const,
  audit: (slug: string) => ["team", slug, "audit"] as const,
};

export function membersQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.members(slug),
    queryFn: () => apiFetch<{ members: MemberRow[] }>(`/api/workspaces/${slug}/members`).then((r) => r.members),
  });
}

export function invitationsQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.invitations(slug),
    queryFn: () => apiFetch<{ invitations: InvitationRow[] }>(`/api/workspaces/${slug}/invitations`).then((r) => r.invitations),
  });
}

export function auditQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.audit(slug),
    queryFn: () => apiFetch<{ events: AuditRow[] }>(`/api/workspaces/${slug}/audit`).then((r) => r.events),
  });
}

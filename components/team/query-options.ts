import { queryOptions } from "@tanstack/react-query";
import { apiFetch } from "@/lib/client/api-fetch";
import type { AuditRow } from "@/lib/team/audit";
import type { InvitationRow } from "@/lib/team/invitations";
import type { MemberRow } from "@/lib/team/members";

// One options factory per resource; mutations invalidate these keys.

export const teamKeys = {
  all: (slug: string) => ["team", slug] as const,
  members: (slug: string) => ["team", slug, "members"] as const,
  invitations: (slug: string) => ["team", slug, "invitations"] as const,
  audit: (slug: string) => ["team", slug, "audit"] as const,
};

export function membersQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.members(slug),
    queryFn: () => apiFetch<{ members: MemberRow[] }>(`/api/w/${slug}/members`).then((r) => r.members),
  });
}

export function invitationsQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.invitations(slug),
    queryFn: () => apiFetch<{ invitations: InvitationRow[] }>(`/api/w/${slug}/invitations`).then((r) => r.invitations),
  });
}

export function auditQuery(slug: string) {
  return queryOptions({
    queryKey: teamKeys.audit(slug),
    queryFn: () => apiFetch<{ events: AuditRow[] }>(`/api/w/${slug}/audit`).then((r) => r.events),
  });
}

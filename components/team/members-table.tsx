"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { dangerButton, secondaryButton } from "@/components/ui/button-styles";
import { ROLES, ROLE_LABELS, type Role } from "@/lib/auth/roles";
import type { MemberRow } from "@/lib/team/members";
import { apiFetch } from "@/lib/client/api-fetch";
import { membersQuery, teamKeys } from "./query-options";

export function MembersTable({ slug, meId, initial }: { slug: string; meId: number; initial: MemberRow[] }) {
  const client = useQueryClient();
  const members = useQuery({ ...membersQuery(slug), initialData: initial });
  const [error, setError] = useState<string | null>(null);
  const [confirming, setConfirming] = useState<number | null>(null);

  const settle = {
    onSuccess: (rows: MemberRow[]) => {
      setError(null);
      client.setQueryData(teamKeys.members(slug), rows);
      void client.invalidateQueries({ queryKey: teamKeys.audit(slug) });
    },
    onError: (e: Error) => setError(e.message),
  };
  const changeRole = useMutation({
    mutationFn: ({ userId, role }: { userId: number; role: Role }) =>
      apiFetch<{ members: MemberRow[] }>(`/api/w/${slug}/members/${userId}`, {
        method: "PATCH",
        body: JSON.stringify({ role }),
      }).then((r) => r.members),
    ...settle,
  });
  const remove = useMutation({
    mutationFn: (userId: number) =>
      apiFetch<{ members: MemberRow[] }>(`/api/w/${slug}/members/${userId}`, { method: "DELETE" }).then((r) => r.members),
    ...settle,
    onSettled: () => setConfirming(null),
  });

  return (
    <section aria-labelledby="members-heading" className="rounded-lg border border-ink-100 bg-white shadow-sm">
      <div className="flex items-baseline justify-between border-b border-ink-100 px-5 py-4">
        <h2 id="members-heading" className="text-base font-semibold text-ink">
          Members
        </h2>
        <p className="text-sm text-ink-400">{members.data.length} in this workspace</p>
      </div>
      {error ? (
        <p role="alert" className="mx-5 mt-4 rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
          {error}
        </p>
      ) : null}
      <table className="w-full text-sm">
        <thead>
          <tr className="text-left text-xs uppercase tracking-wider text-ink-400">
            <th className="px-5 py-3 font-semibold">Name</th>
            <th className="px-5 py-3 font-semibold">Role</th>
            <th className="px-5 py-3 text-right font-semibold">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-ink-50">
          {members.data.map((m) => (
            <tr key={m.userId} data-testid={`member-${m.email}`}>
              <td className="px-5 py-3">
                <p className="font-medium text-ink">
                  {m.name}
                  {m.userId === meId ? <span className="ml-2 text-xs font-normal text-ink-400">(you)</span> : null}
                </p>
                <p className="text-ink-400">{m.email}</p>
              </td>
              <td className="px-5 py-3">
                <label className="sr-only" htmlFor={`role-${m.userId}`}>
                  Role of {m.name}
                </label>
                <select
                  id={`role-${m.userId}`}
                  value={m.role}
                  disabled={changeRole.isPending}
                  onChange={(e) => changeRole.mutate({ userId: m.userId, role: e.target.value as Role })}
                  className="rounded-md border border-ink-200 bg-white py-1.5 pl-2 pr-8 text-sm text-ink focus:border-ochre-500 focus:outline-none focus:ring-2 focus:ring-ochre-200"
                >
                  {ROLES.map((r) => (
                    <option key={r} value={r}>
                      {ROLE_LABELS[r]}
                    </option>
                  ))}
                </select>
              </td>
              <td className="px-5 py-3 text-right">
                {confirming === m.userId ? (
                  <span className="inline-flex gap-2">
                    <button type="button" className={dangerButton} disabled={remove.isPending} onClick={() => remove.mutate(m.userId)}>
                      Confirm removal
                    </button>
                    <button type="button" className={secondaryButton} onClick={() => setConfirming(null)}>
                      Keep
                    </button>
                  </span>
                ) : (
                  <button type="button" className={secondaryButton} onClick={() => setConfirming(m.userId)}>
                    Remove
                  </button>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

"use client";

import { useRouter } from "next/navigation";
import { ROLE_LABELS, type Role } from "@/lib/auth/roles";

export function WorkspaceSwitcher({
  current,
  workspaces,
}: {
  current: string;
  workspaces: { slug: string; name: string; role: Role }[];
}) {
  const router = useRouter();
  return (
    <label className="flex items-center gap-2 text-sm">
      <span className="sr-only">Workspace</span>
      <select
        value={current}
        onChange={(e) => router.push(`/w/${e.target.value}/desk`)}
        className="max-w-[24rem] truncate rounded-md border border-ink-600 bg-ink-700 py-1.5 pl-3 pr-8 text-sm font-medium text-white focus:border-ochre-400 focus:outline-none focus:ring-1 focus:ring-ochre-400"
      >
        {workspaces.map((w) => (
          <option key={w.slug} value={w.slug}>
            {w.name} — {ROLE_LABELS[w.role]}
          </option>
        ))}
      </select>
    </label>
  );
}

"use client";

import { useQuery } from "@tanstack/react-query";
import type { AuditRow } from "@/lib/auth/team";
import { auditQuery } from "./query-options";

const LABELS: Record<string, string> = {
  "sign-in.succeeded": "Signed in",
  "sign-in.failed": "Sign-in failed",
  "sign-in.throttled": "Sign-in refused (too many attempts)",
  "invitation.sent": "Invitation sent",
  "invitation.accepted": "Invitation accepted",
  "member.role-changed": "Role changed",
  "member.removed": "Member removed",
};

const timeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });

function describe(e: AuditRow): string {
  const d = e.detail;
  if (e.action === "member.role-changed" && typeof d.from === "string" && typeof d.to === "string") return `${d.from} → ${d.to}`;
  if ((e.action === "invitation.sent" || e.action === "invitation.accepted" || e.action === "member.removed") && typeof d.role === "string")
    return `as ${d.role}`;
  if (e.action.startsWith("sign-in.") && typeof d.ip === "string") return `from ${d.ip}`;
  return "";
}

export function AuditTrail({ slug, initial }: { slug: string; initial: AuditRow[] }) {
  const events = useQuery({ ...auditQuery(slug), initialData: initial });
  return (
    <section aria-labelledby="audit-heading" className="rounded-lg border border-ink-100 bg-white shadow-sm">
      <div className="border-b border-ink-100 px-5 py-4">
        <h2 id="audit-heading" className="text-base font-semibold text-ink">
          Audit trail
        </h2>
        <p className="text-sm text-ink-400">Sign-ins of members, invitations, role changes and removals, newest first.</p>
      </div>
      {events.data.length === 0 ? (
        <p className="px-5 py-4 text-sm text-ink-400">No events yet.</p>
      ) : (
        <div className="max-h-[28rem] overflow-y-auto">
          <table className="w-full text-sm" data-testid="audit-trail">
            <thead className="sticky top-0 bg-white">
              <tr className="text-left text-xs uppercase tracking-wider text-ink-400">
                <th className="px-5 py-2 font-semibold">When</th>
                <th className="px-5 py-2 font-semibold">What</th>
                <th className="px-5 py-2 font-semibold">Who</th>
                <th className="px-5 py-2 font-semibold">Concerning</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-ink-50">
              {events.data.map((e) => (
                <tr key={e.id}>
                  <td className="whitespace-nowrap px-5 py-2 tabular-nums text-ink-500">{timeFormat.format(new Date(e.at))}</td>
                  <td className="px-5 py-2">
                    <span className={e.action.endsWith("failed") || e.action.endsWith("throttled") ? "text-red-800" : "text-ink"}>
                      {LABELS[e.action] ?? e.action}
                    </span>{" "}
                    <span className="text-ink-400">{describe(e)}</span>
                  </td>
                  <td className="px-5 py-2 text-ink-600">{e.actor ?? "—"}</td>
                  <td className="px-5 py-2 text-ink-600">{e.target ?? "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}

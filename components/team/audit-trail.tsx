"use client";

import { useQuery } from "@tanstack/react-query";
import type { AuditRow } from "@/lib/team/audit";
import { auditQuery } from "./query-options";
import { runName } from "@/lib/runs/label";

const LABELS: Record<string, string> = {
  "sign-in.succeeded": "Signed in",
  "sign-in.failed": "Sign-in failed",
  "sign-in.throttled": "Sign-in refused (too many attempts)",
  "invitation.sent": "Invitation sent",
  "invitation.accepted": "Invitation accepted",
  "member.role-changed": "Role changed",
  "member.removed": "Member removed",
  "upload.completed": "File uploaded",
  "version.submitted": "New version submitted for validation",
  "version.published": "Version published",
  "version.archived": "Version archived",
  "indicator.updated": "Indicator metadata saved",
  "run.started": "Run started",
  "run.rerun": "Rerun started",
  "run.cancelled": "Run cancelled",
  "digest.sent-now": "Digest sent on request",
  "workspace.created": "Workspace created",
  "api-token.created": "API token created",
  "api-token.used-from-new-address": "API token used from a new address",
  "api-token.revoked": "API token revoked",
};

const timeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });
const countFormat = new Intl.NumberFormat("en-GB");

type Detail = Record<string, unknown>;
const text = (v: unknown): string | null => (typeof v === "string" ? v : null);
const count = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

function bytes(size: number): string {
  if (size < 1024) return `${countFormat.format(size)} bytes`;
  if (size < 1024 * 1024) return `${(size / 1024).toFixed(1)} kB`;
  return `${(size / 1024 / 1024).toFixed(1)} MB`;
}

function runSummary(d: Detail): string {
  const indicators = count(d.indicators);
  const periods = count(d.periods);
  const permutations = count(d.permutations);
  const seed = count(d.seed);
  const parts = [
    indicators !== null && periods !== null ? `${indicators} indicators × ${periods} periods` : null,
    text(d.weights),
    permutations !== null ? `${countFormat.format(permutations)} permutations` : null,
    seed !== null ? `seed ${seed}` : null,
  ];
  return parts.filter((p): p is string => p !== null).join(", ");
}

function rerunSummary(d: Detail): string {
  // Events written before runs were numbered per workspace only have the global id.
  const ofNumber = count(d.rerunOfNumber);
  const of = count(d.rerunOf);
  return [ofNumber !== null ? `of ${runName(ofNumber)}` : of !== null ? `of run id ${of}` : "", runSummary(d)].filter((p) => p !== "").join(", ");
}

function indicatorChange(d: Detail): string {
  if (d.created === true) return "created";
  const changed = Array.isArray(d.changed) ? d.changed.filter((f): f is string => typeof f === "string") : [];
  return changed.length === 0 ? "saved unchanged" : `changed ${changed.map((f) => (f === "higherIsBetter" ? "direction" : f)).join(", ")}`;
}

const prefixed = (word: string, value: string | null): string => (value !== null ? `${word} ${value}` : "");
const asRole = (d: Detail): string => prefixed("as", text(d.role));

// One plain line per action, built only from the detail's expected types; anything else is left out.
const DESCRIBE: Record<string, (d: Detail) => string> = {
  "member.role-changed": (d) => (text(d.from) !== null && text(d.to) !== null ? `${text(d.from)} → ${text(d.to)}` : ""),
  "invitation.sent": asRole,
  "invitation.accepted": asRole,
  "member.removed": asRole,
  "upload.completed": (d) => {
    const size = count(d.size);
    return size !== null ? `${bytes(size)}, checksum verified` : "";
  },
  "version.submitted": (d) => prefixed("from", text(d.fileName)),
  "version.archived": (d) => prefixed("was", text(d.from)),
  "indicator.updated": indicatorChange,
  "run.started": runSummary,
  "run.rerun": rerunSummary,
  "digest.sent-now": (d) => {
    const cadence = text(d.cadence);
    return cadence !== null ? `${cadence.replace("_", "-")} subscription` : "";
  },
};

function describe(e: AuditRow): string {
  if (e.action.startsWith("sign-in.")) return typeof e.detail.ip === "string" ? `from ${e.detail.ip}` : "";
  return DESCRIBE[e.action]?.(e.detail) ?? "";
}

export function AuditTrail({ slug, initial }: { slug: string; initial: AuditRow[] }) {
  const events = useQuery({ ...auditQuery(slug), initialData: initial });
  return (
    <section aria-labelledby="audit-heading" className="rounded-lg border border-ink-100 bg-white shadow-sm">
      <div className="border-b border-ink-100 px-5 py-4">
        <h2 id="audit-heading" className="text-base font-semibold text-ink">
          Audit trail
        </h2>
        <p className="text-sm text-ink-400">Sign-ins of members, team changes, uploads, versions published or archived, indicator edits, runs and digests sent on request, newest first.</p>
      </div>
      {events.data.length === 0 ? (
        <p className="px-5 py-4 text-sm text-ink-400">No events yet.</p>
      ) : (
        <div className="max-h-[28rem] overflow-y-auto" tabIndex={0} role="region" aria-labelledby="audit-heading">
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

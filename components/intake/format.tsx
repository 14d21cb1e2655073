import type { VersionState } from "@/models/intake-types";

// Small shared pieces of the intake screens.

const STATE_STYLE: Record<VersionState, string> = {
  uploaded: "bg-ink-50 text-ink-600 ring-ink-200",
  validated: "bg-ochre-50 text-ochre-800 ring-ochre-200",
  rejected: "bg-red-50 text-red-800 ring-red-200",
  published: "bg-[#115e59]/10 text-[#115e59] ring-[#115e59]/30",
  archived: "bg-ink-50 text-ink-400 ring-ink-100",
};

export const STATE_LABEL: Record<VersionState, string> = {
  uploaded: "Validating…",
  validated: "Validated",
  rejected: "Rejected",
  published: "Published",
  archived: "Archived",
};

export function StateBadge({ state }: { state: VersionState }) {
  return (
    <span data-testid="version-state" data-state={state} className={`inline-flex items-center rounded-full px-2 py-0.5 text-xs font-medium ring-1 ring-inset ${STATE_STYLE[state]}`}>
      {STATE_LABEL[state]}
    </span>
  );
}

export function Panel({ title, caption, children, actions }: { title: string; caption?: string; children: React.ReactNode; actions?: React.ReactNode }) {
  return (
    <section className="rounded-lg border border-ink-100 bg-white p-5 shadow-sm">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 className="text-base font-semibold text-ink">{title}</h2>
          {caption ? <p className="mt-1 max-w-3xl text-sm text-ink-500">{caption}</p> : null}
        </div>
        {actions}
      </div>
      <div className="mt-4">{children}</div>
    </section>
  );
}

export function Notice({ tone = "info", children }: { tone?: "info" | "error" | "success"; children: React.ReactNode }) {
  const style = tone === "error" ? "border-red-200 bg-red-50 text-red-900" : tone === "success" ? "border-[#115e59]/30 bg-[#115e59]/5 text-[#115e59]" : "border-ink-100 bg-ink-50 text-ink-700";
  return (
    <div role={tone === "error" ? "alert" : "status"} className={`rounded-md border px-3 py-2 text-sm ${style}`}>
      {children}
    </div>
  );
}

export function formatDate(iso: string | null): string {
  if (!iso) return "—";
  return new Date(iso).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" });
}

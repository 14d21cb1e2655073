import type { SignificanceClass } from "@/lib/runs/types";

// Shared formatting and small visual pieces of the analyses screens.

export function fmt(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  const text = value.toFixed(digits);
  return /^-0\.?0*$/.test(text) ? text.slice(1) : text.replace("-", "−");
}

export function fmtP(value: number | null | undefined): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  if (value < 0.001) return "< 0.001";
  return value.toFixed(3);
}

export function fmtSigned(value: number | null | undefined, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return "—";
  return `${value > 0 ? "+" : value < 0 ? "−" : "±"}${Math.abs(value).toFixed(digits)}`;
}

// Local cluster classes are named and coloured in one place only.
export { CLUSTER_CLASS_COLOURS, CLUSTER_CLASS_NAMES, CLUSTER_CLASS_ORDER } from "@/lib/runs/cluster-classes";

const BADGE: Record<SignificanceClass, string> = {
  clustering: "bg-[#9a3412]/10 text-[#7c2d12] ring-[#9a3412]/30",
  dispersion: "bg-[#115e59]/10 text-[#115e59] ring-[#115e59]/30",
  "not-significant": "bg-ink-50 text-ink-500 ring-ink-200",
};

export const SIGNIFICANCE_SHORT: Record<SignificanceClass, string> = {
  clustering: "Clustering",
  dispersion: "Dispersion",
  "not-significant": "Not significant",
};

export function SignificanceBadge({ value }: { value: SignificanceClass | null }) {
  if (!value) return <span className="text-xs text-ink-400">not computed</span>;
  return (
    <span className={`inline-flex items-center rounded-full px-2 py-0.5 text-xs font-medium ring-1 ring-inset ${BADGE[value]}`}>{SIGNIFICANCE_SHORT[value]}</span>
  );
}

const STATE_BADGE: Record<string, string> = {
  queued: "bg-ink-50 text-ink-600 ring-ink-200",
  running: "bg-ochre-50 text-ochre-800 ring-ochre-300",
  completed: "bg-emerald-50 text-emerald-800 ring-emerald-200",
  failed: "bg-red-50 text-red-800 ring-red-200",
  cancelled: "bg-stone-100 text-stone-600 ring-stone-300",
};

export function StateBadge({ state }: { state: string }) {
  return (
    <span className={`inline-flex items-center gap-1 rounded-full px-2 py-0.5 text-xs font-medium capitalize ring-1 ring-inset ${STATE_BADGE[state] ?? STATE_BADGE.queued}`}>
      {state === "running" ? <span className="h-1.5 w-1.5 animate-pulse rounded-full bg-ochre-500" aria-hidden="true" /> : null}
      {state}
    </span>
  );
}

export function Panel({ title, caption, children, className = "", actions }: { title: string; caption?: React.ReactNode; children: React.ReactNode; className?: string; actions?: React.ReactNode }) {
  return (
    <section className={`rounded-lg border border-ink-100 bg-white shadow-sm ${className}`}>
      <header className="flex items-start justify-between gap-4 border-b border-ink-50 px-5 py-3">
        <h2 className="text-sm font-semibold text-ink">{title}</h2>
        {actions}
      </header>
      <div className="p-5">{children}</div>
      {caption ? <p className="border-t border-ink-50 px-5 py-3 text-xs leading-relaxed text-ink-500">{caption}</p> : null}
    </section>
  );
}

export function Notice({ tone = "info", children }: { tone?: "info" | "error"; children: React.ReactNode }) {
  const cls = tone === "error" ? "border-red-200 bg-red-50 text-red-800" : "border-ink-100 bg-ink-50 text-ink-600";
  return <div className={`rounded-md border px-4 py-3 text-sm ${cls}`}>{children}</div>;
}

export { runLabel, runName, weightsLabel } from "@/lib/runs/label";

"use client";

import "./ag-grid-setup";
import Link from "next/link";
import { useUrlParams } from "@/components/runs/use-url-params";
import { useQuery } from "@tanstack/react-query";
import { AgGridReact } from "ag-grid-react";
import type { ColDef, ICellRendererParams, ValueFormatterParams } from "ag-grid-community";
import { useState } from "react";
import { inputClass, secondaryButton } from "@/components/ui/button-styles";
import { fmt, fmtP, fmtSigned, Notice, runName, SignificanceBadge, SIGNIFICANCE_SHORT } from "@/components/runs/format";
import { catalogueExportUrl, catalogueQuery, runsQuery } from "@/components/runs/query-options";
import { RunExports } from "@/components/runs/run-exports";
import type { CatalogueRow } from "@/lib/runs/catalogue-wire";
import { runLabel } from "@/lib/runs/label";
import { MODEL_SUGGESTIONS, SIGNIFICANCE_CLASSES } from "@/lib/runs/schemas";
import { MODEL_SUGGESTION_LABELS, type ModelSuggestionWord, type SignificanceClass } from "@/lib/runs/types";
import { tesseraGridTheme } from "./ag-grid-setup";

const COLUMN_CHOICES = [
  { id: "n", label: "n" },
  { id: "I", label: "Moran's I" },
  { id: "expectedI", label: "E[I]" },
  { id: "z", label: "z" },
  { id: "p", label: "p" },
  { id: "pseudoP", label: "Pseudo p" },
  { id: "adjustedP", label: "Adjusted p" },
  { id: "significance", label: "Class" },
  { id: "deltaI", label: "ΔI" },
  { id: "gearyC", label: "Geary's C" },
  { id: "generalG", label: "General G" },
  { id: "reachability", label: "Reachable?" },
  { id: "residualI", label: "Residual I" },
  { id: "residualP", label: "Residual p" },
  { id: "modelSuggestion", label: "Points to" },
] as const;

/** The residual columns: shown by default only when a row has them (a run that controlled for covariates). */
const RESIDUAL_COLUMNS = ["residualI", "residualP", "modelSuggestion"];
const DEFAULT_HIDDEN = ["adjustedP", "gearyC", "generalG"];

export function CatalogueScreen({ slug, canExport }: { slug: string; canExport: boolean }) {
  const { params, setParams: update } = useUrlParams();
  const run = params.get("run") ?? "";
  const classParam = params.get("class") ?? "";
  const colsParam = params.get("cols");
  const classes = classParam.split(",").filter((c): c is SignificanceClass => (SIGNIFICANCE_CLASSES as readonly string[]).includes(c));
  const from = params.get("from") ?? "";
  const to = params.get("to") ?? "";
  const q = params.get("q") ?? "";
  const suggestionParam = params.get("suggestion") ?? "";
  const suggestions = suggestionParam.split(",").filter((c): c is ModelSuggestionWord => (MODEL_SUGGESTIONS as readonly string[]).includes(c));
  const [text, setText] = useState(q);

  const apiSearch = searchFor(run, classParam, from, to, q, suggestionParam);

  const rows = useQuery(catalogueQuery(slug, apiSearch));
  // The period choices come from an unfiltered view so the range can widen again.
  const all = useQuery(catalogueQuery(slug, run ? `run=${run}` : ""));
  const hasResidual = (all.data ?? []).some((r) => r.residualI !== null || r.modelSuggestion !== null);
  const defaultHidden = hasResidual ? DEFAULT_HIDDEN : [...DEFAULT_HIDDEN, ...RESIDUAL_COLUMNS];
  const hiddenKey = colsParam !== null ? COLUMN_CHOICES.map((c) => c.id as string).filter((id) => !colsParam.split(",").includes(id)).join(",") : defaultHidden.join(",");
  const hidden = hiddenKey.split(",");
  const runs = useQuery(runsQuery(slug));
  // The run's own exports (docs/exports.md) when the catalogue shows one completed run.
  const chosenRun = run ? (runs.data ?? []).find((r) => String(r.id) === run && r.state === "completed") : undefined;

  const toggleClass = (c: SignificanceClass) => {
    const set = new Set(classes);
    if (set.has(c)) set.delete(c);
    else set.add(c);
    update({ class: [...set].join(",") || null });
  };
  const toggleSuggestion = (c: ModelSuggestionWord) => {
    const set = new Set(suggestions);
    if (set.has(c)) set.delete(c);
    else set.add(c);
    update({ suggestion: [...set].join(",") || null });
  };
  const suggestionCounts: Record<ModelSuggestionWord, number> = { error: 0, lag: 0, both: 0, neither: 0 };
  for (const r of all.data ?? []) if (r.modelSuggestion) suggestionCounts[r.modelSuggestion]++;
  const toggleColumn = (id: string) => {
    const visible = COLUMN_CHOICES.map((c) => c.id as string).filter((c) => !hidden.includes(c));
    const next = visible.includes(id) ? visible.filter((c) => c !== id) : [...visible, id];
    update({ cols: next.join(",") || "none" });
  };

  const columns = buildColumns(slug, hiddenKey);
  const completedRuns = (runs.data ?? []).filter((r) => r.state === "completed");
  const counts: Record<SignificanceClass, number> = { clustering: 0, dispersion: 0, "not-significant": 0 };
  for (const r of all.data ?? []) if (r.significance) counts[r.significance]++;
  const periods = [...new Set((all.data ?? []).map((r) => r.period))].sort();

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-end gap-4 rounded-lg border border-ink-100 bg-white p-4 shadow-sm">
        <div>
          <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="cat-run">
            Run
          </label>
          <select id="cat-run" className={`${inputClass} mt-1 w-[30rem] max-w-full`} value={run} onChange={(e) => update({ run: e.target.value || null })}>
            <option value="">Latest run of each indicator</option>
            {completedRuns.map((r) => (
              <option key={r.id} value={r.id}>
                {runLabel(r)} · {new Date(r.finishedAt ?? r.createdAt).toLocaleDateString("en-GB")}
              </option>
            ))}
          </select>
        </div>
        <div>
          <span className="block text-xs font-semibold uppercase tracking-wider text-ink-400">Significance</span>
          <div className="mt-1 flex gap-1" role="group" aria-label="Significance class filter">
            {SIGNIFICANCE_CLASSES.map((c) => (
              <button
                key={c}
                type="button"
                aria-pressed={classes.includes(c)}
                onClick={() => toggleClass(c)}
                className={`rounded-full px-3 py-1.5 text-sm font-medium ring-1 ring-inset transition ${
                  classes.includes(c) ? "bg-ink text-white ring-ink" : "bg-white text-ink-600 ring-ink-200 hover:bg-ink-50"
                }`}
              >
                {SIGNIFICANCE_SHORT[c]} <span className="tabular-nums opacity-85">{counts[c]}</span>
              </button>
            ))}
          </div>
        </div>
        {hasResidual || suggestions.length ? (
          <div>
            <span className="block text-xs font-semibold uppercase tracking-wider text-ink-400" title="What the residual diagnostics of a run with covariates point to">
              After covariates, points to
            </span>
            <div className="mt-1 flex gap-1" role="group" aria-label="Suggested model filter">
              {MODEL_SUGGESTIONS.map((c) => (
                <button
                  key={c}
                  type="button"
                  aria-pressed={suggestions.includes(c)}
                  onClick={() => toggleSuggestion(c)}
                  className={`rounded-full px-3 py-1.5 text-sm font-medium ring-1 ring-inset transition ${
                    suggestions.includes(c) ? "bg-ink text-white ring-ink" : "bg-white text-ink-600 ring-ink-200 hover:bg-ink-50"
                  }`}
                >
                  {SUGGESTION_SHORT[c]} <span className="tabular-nums opacity-85">{suggestionCounts[c]}</span>
                </button>
              ))}
            </div>
          </div>
        ) : null}
        <div className="flex items-end gap-2">
          <div>
            <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="cat-from">
              From
            </label>
            <select id="cat-from" className={`${inputClass} mt-1 w-28`} value={from} onChange={(e) => update({ from: e.target.value || null })}>
              <option value="">first</option>
              {periods.map((p) => (
                <option key={p}>{p}</option>
              ))}
            </select>
          </div>
          <div>
            <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="cat-to">
              To
            </label>
            <select id="cat-to" className={`${inputClass} mt-1 w-28`} value={to} onChange={(e) => update({ to: e.target.value || null })}>
              <option value="">last</option>
              {periods.map((p) => (
                <option key={p}>{p}</option>
              ))}
            </select>
          </div>
        </div>
        <form
          className="min-w-48 flex-1"
          onSubmit={(e) => {
            e.preventDefault();
            update({ q: text.trim() || null });
          }}
        >
          <label className="block text-xs font-semibold uppercase tracking-wider text-ink-400" htmlFor="cat-q">
            Indicator
          </label>
          <input id="cat-q" className={`${inputClass} mt-1`} placeholder="Type and press Enter" value={text} onChange={(e) => setText(e.target.value)} onBlur={() => update({ q: text.trim() || null })} />
        </form>
        <details className="relative">
          <summary className={`${secondaryButton} cursor-pointer list-none`}>Columns</summary>
          <div className="absolute right-0 z-20 mt-2 w-48 rounded-md border border-ink-100 bg-white p-3 shadow-lg">
            {COLUMN_CHOICES.map((c) => (
              <label key={c.id} className="flex items-center gap-2 py-0.5 text-sm text-ink-700">
                <input type="checkbox" className="accent-ochre-500" checked={!hidden.includes(c.id)} onChange={() => toggleColumn(c.id)} />
                {c.label}
              </label>
            ))}
          </div>
        </details>
        {canExport ? (
          <a className={secondaryButton} href={catalogueExportUrl(slug, apiSearch)} download>
            Export CSV
          </a>
        ) : null}
        {canExport && chosenRun ? <RunExports slug={slug} runId={chosenRun.id} runName={runName(chosenRun.number)} localComputed={chosenRun.params.local} /> : null}
      </div>

      {rows.error ? <Notice tone="error">{rows.error.message}</Notice> : null}
      {rows.data && all.data && all.data.length === 0 ? (
        <Notice>
          No completed analyses yet.{" "}
          {canExport ? (
            <Link className="font-medium text-ochre-700 underline" href={`/w/${slug}/runs`}>
              Start a run
            </Link>
          ) : (
            "An economist starts runs from the Runs screen."
          )}
        </Notice>
      ) : null}
      <div className="h-[560px]" data-testid="catalogue-grid">
        <AgGridReact<CatalogueRow>
          theme={tesseraGridTheme}
          rowData={rows.data ?? []}
          columnDefs={columns}
          loading={rows.isPending}
          defaultColDef={{ sortable: true, resizable: true, suppressHeaderMenuButton: true }}
          getRowId={(p) => `${p.data.runId}|${p.data.indicator}|${p.data.period}`}
          tooltipShowDelay={300}
          suppressColumnVirtualisation
          overlayNoRowsTemplate="No indicator-period matches these filters."
        />
      </div>
      <p className="text-xs text-ink-500" data-testid="catalogue-count">
        {rows.data ? `${rows.data.length} indicator-period${rows.data.length === 1 ? "" : "s"} shown` : " "}. Class uses each run&apos;s two-sided
        permutation pseudo p after its multiple-testing correction (see the run&apos;s parameters); z and p are under randomisation. ΔI is the
        change from the previous period of the same run.{hasResidual ? (
          <>
            {" "}
            Residual I is Moran&apos;s I of what the run&apos;s covariates leave unexplained (ordinary least squares), with its two-sided p; &ldquo;points to&rdquo;
            is the model the Lagrange multiplier tests suggest: a spatial error, a spatial lag, both, or neither. It suggests a model; it does not fit one.
          </>
        ) : null}
      </p>
    </div>
  );
}

function buildColumns(slug: string, hiddenKey: string): ColDef<CatalogueRow>[] {
  {
    const num = (digits: number) => (p: ValueFormatterParams<CatalogueRow, number | null>) => fmt(p.value, digits);
    const pfmt = (p: ValueFormatterParams<CatalogueRow, number | null>) => fmtP(p.value);
    const defs: ColDef<CatalogueRow>[] = [
      {
        colId: "indicator",
        headerName: "Indicator",
        field: "indicatorLabel",
        minWidth: 200,
        flex: 2,
        pinned: "left",
        cellRenderer: (p: ICellRendererParams<CatalogueRow>) =>
          p.data ? (
            <Link className="font-medium text-ink hover:text-ochre-700 hover:underline" href={`/w/${slug}/timeline?indicator=${encodeURIComponent(p.data.indicator)}&run=${p.data.runId}`}>
              {p.data.indicatorLabel}
            </Link>
          ) : null,
      },
      {
        colId: "period",
        headerName: "Period",
        field: "period",
        width: 100,
        cellRenderer: (p: ICellRendererParams<CatalogueRow>) =>
          p.data ? (
            <Link className="tabular-nums text-ink hover:text-ochre-700 hover:underline" href={`/w/${slug}/map?indicator=${encodeURIComponent(p.data.indicator)}&run=${p.data.runId}&a=${encodeURIComponent(p.data.period)}`}>
              {p.data.period}
            </Link>
          ) : null,
      },
      { colId: "n", headerName: "n", field: "n", width: 80, type: "numericColumn" },
      { colId: "I", headerName: "Moran's I", field: "I", width: 110, type: "numericColumn", valueFormatter: num(3) },
      { colId: "expectedI", headerName: "E[I]", field: "expectedI", width: 100, type: "numericColumn", valueFormatter: num(4) },
      { colId: "z", headerName: "z (rand.)", headerTooltip: "z under randomisation", field: "z", width: 100, type: "numericColumn", valueFormatter: num(2) },
      { colId: "p", headerName: "p (rand.)", headerTooltip: "Two-sided p under randomisation", field: "p", width: 100, type: "numericColumn", valueFormatter: pfmt },
      { colId: "pseudoP", headerName: "Pseudo p", headerTooltip: "Two-sided permutation pseudo p", field: "pseudoP", width: 100, type: "numericColumn", valueFormatter: pfmt },
      { colId: "adjustedP", headerName: "Adjusted p", headerTooltip: "Pseudo p after the run's correction", field: "adjustedP", width: 110, type: "numericColumn", valueFormatter: pfmt },
      {
        colId: "significance",
        headerName: "Class",
        field: "significance",
        width: 160,
        cellRenderer: (p: ICellRendererParams<CatalogueRow>) =>
          p.data ? (
            p.data.status === "not-computed" ? (
              <span className="text-xs text-ink-400" title={p.data.note ?? undefined}>
                not computed
              </span>
            ) : (
              <SignificanceBadge value={p.data.significance} />
            )
          ) : null,
      },
      {
        colId: "deltaI",
        headerName: "ΔI",
        headerTooltip: "Change in I from the previous period",
        field: "deltaI",
        width: 100,
        type: "numericColumn",
        valueFormatter: (p: ValueFormatterParams<CatalogueRow, number | null>) => fmtSigned(p.value),
      },
      { colId: "gearyC", headerName: "Geary's C", field: "gearyC", width: 110, type: "numericColumn", valueFormatter: num(3) },
      { colId: "generalG", headerName: "General G", field: "generalG", width: 110, type: "numericColumn", valueFormatter: num(5) },
      {
        colId: "reachability",
        headerName: "Reachable?",
        headerTooltip: "Whether the run's permutations could make this result significant under its correction, and the permutations needed when not",
        minWidth: 220,
        flex: 2,
        valueGetter: (p) => (p.data ? [p.data.classReachability, p.data.clusterReachability ? `Local clusters: ${p.data.clusterReachability}` : null].filter(Boolean).join(" ") : ""),
        tooltipValueGetter: (p) => (typeof p.value === "string" && p.value ? p.value : null),
        cellRenderer: (p: ICellRendererParams<CatalogueRow, string>) =>
          p.value ? (
            <span className="text-xs text-ochre-900" data-testid="catalogue-reachability">
              {p.value}
            </span>
          ) : null,
      },
      { colId: "residualI", headerName: "Residual I", headerTooltip: "Moran's I of the residuals after the run's covariates", field: "residualI", width: 110, type: "numericColumn", valueFormatter: num(3) },
      { colId: "residualP", headerName: "Residual p", headerTooltip: "Two-sided p of the residual I (normal approximation)", field: "residualP", width: 110, type: "numericColumn", valueFormatter: pfmt },
      {
        colId: "modelSuggestion",
        headerName: "Points to",
        headerTooltip: "The model the Lagrange multiplier tests suggest for the residual dependence",
        field: "modelSuggestion",
        width: 150,
        valueFormatter: (p: ValueFormatterParams<CatalogueRow, ModelSuggestionWord | null>) => (p.value ? MODEL_SUGGESTION_LABELS[p.value] : ""),
      },
      { colId: "note", headerName: "Note", field: "note", flex: 2, minWidth: 200, tooltipField: "note", cellClass: "text-xs text-ink-500" },
    ];
    const hiddenIds = hiddenKey.split(",");
    return defs.map((d) => ({ ...d, hide: hiddenIds.includes(d.colId ?? "") }));
  }
}

const SUGGESTION_SHORT: Record<ModelSuggestionWord, string> = { error: "Error", lag: "Lag", both: "Both", neither: "Neither" };

function searchFor(run: string, classParam: string, from: string, to: string, q: string, suggestionParam: string): string {
  const s = new URLSearchParams();
  if (run) s.set("run", run);
  const valid = classParam.split(",").filter((c) => (SIGNIFICANCE_CLASSES as readonly string[]).includes(c));
  if (valid.length) s.set("class", valid.join(","));
  if (from) s.set("from", from);
  if (to) s.set("to", to);
  if (q) s.set("q", q);
  const suggestions = suggestionParam.split(",").filter((c) => (MODEL_SUGGESTIONS as readonly string[]).includes(c));
  if (suggestions.length) s.set("suggestion", suggestions.join(","));
  return s.toString();
}

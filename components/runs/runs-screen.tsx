"use client";

import Link from "next/link";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useMemo, useState } from "react";
import { ApiError } from "@/lib/client/api-fetch";
import { dangerButton, inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { startFormReachability } from "@/lib/runs/reachability";
import { CORRECTION_LABELS, CORRECTIONS, ISLAND_POLICIES, ISLAND_POLICY_LABELS, MAX_CONTROL_FOR, runParamsInputSchema, SEQUENTIAL_EXTREMES, WEIGHTS_CHOICES } from "@/lib/runs/schemas";
import type { RunSummary } from "@/lib/runs/queries";
import { EB_LABEL } from "@/lib/runs/label";
import { Notice, Panel, runLabel, runName, StateBadge, weightsLabel } from "./format";
import { StartFormReachability } from "./reachability-note";
import { RunExports } from "./run-exports";
import { RunAnnouncer } from "./run-announcer";
import { runOptionsQuery, runsApi, runsKeys, runsQuery } from "./query-options";

export function RunsScreen({ slug, canManage }: { slug: string; canManage: boolean }) {
  const runs = useQuery(runsQuery(slug));
  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_420px]">
      <Panel
        title="Queue"
        caption="Each run is split into one piece per indicator so several workers share it. Progress counts indicator-periods stored. A rerun repeats the stored parameters, data version and seed, so every number is reproduced."
      >
        {runs.isPending ? <p className="text-sm text-ink-500">Loading runs…</p> : null}
        {runs.error ? <Notice tone="error">{runs.error.message}</Notice> : null}
        {runs.data && runs.data.length === 0 ? <Notice>No runs yet. Start one with the form beside the queue.</Notice> : null}
        {runs.data && runs.data.length > 0 ? <RunsTable slug={slug} runs={runs.data} canManage={canManage} /> : null}
      </Panel>
      {canManage ? <StartRunForm slug={slug} /> : null}
      <RunAnnouncer runs={runs.data} />
    </div>
  );
}

function RunsTable({ slug, runs, canManage }: { slug: string; runs: RunSummary[]; canManage: boolean }) {
  const client = useQueryClient();
  const [message, setMessage] = useState<string | null>(null);
  const cancel = useMutation({
    mutationFn: (runId: number) => runsApi.cancel(slug, runId),
    onSuccess: () => client.invalidateQueries({ queryKey: runsKeys.all(slug) }),
    onError: (e) => setMessage(e.message),
  });
  const rerun = useMutation({
    mutationFn: (runId: number) => runsApi.rerun(slug, runId),
    onSuccess: (r) => {
      setMessage(`${runName(r.number)} queued with the same parameters and seed.`);
      return client.invalidateQueries({ queryKey: runsKeys.all(slug) });
    },
    onError: (e) => setMessage(e.message),
  });
  return (
    <div>
      <div className="mb-3 empty:mb-0" role="status" aria-live="polite">
        {message ? <Notice>{message}</Notice> : null}
      </div>
      <ul className="divide-y divide-ink-50" data-testid="runs-list">
        {runs.map((run) => {
          const pct = run.resultsTotal ? Math.round((100 * run.periodsDone) / run.resultsTotal) : 0;
          const active = run.state === "queued" || run.state === "running";
          return (
            <li key={run.id} className="py-4" data-testid={`run-${run.id}`} data-run-number={run.number} data-state={run.state}>
              <div className="flex flex-wrap items-center justify-between gap-3">
                <div className="min-w-0">
                  <div className="flex items-center gap-2">
                    <span className="font-semibold text-ink" data-testid="run-label">
                      {runLabel(run)}
                    </span>
                    <StateBadge state={run.state} />
                    {run.rerunOfNumber !== null ? <span className="text-xs text-ink-400">rerun of {runName(run.rerunOfNumber)}</span> : null}
                    {run.origin === "demo" ? <span className="text-xs text-ink-400">demo</span> : null}
                  </div>
                  <p className="mt-1 text-sm text-ink-500">
                    {run.panelName} · version {run.panelVersion} · {run.params.indicators.length} indicator{run.params.indicators.length === 1 ? "" : "s"} ×{" "}
                    {run.params.periods.length} period{run.params.periods.length === 1 ? "" : "s"} ({run.params.periods[0]}–{run.params.periods[run.params.periods.length - 1]})
                  </p>
                </div>
                <div className="flex gap-2">
                  {run.state === "completed" ? (
                    <Link className={secondaryButton} href={`/w/${slug}/catalogue?run=${run.id}`}>
                      Open in catalogue
                    </Link>
                  ) : null}
                  {canManage && run.state === "completed" ? <RunExports slug={slug} runId={run.id} runName={runName(run.number)} localComputed={run.params.local} /> : null}
                  {canManage && active ? (
                    <button type="button" className={dangerButton} disabled={cancel.isPending} onClick={() => cancel.mutate(run.id)}>
                      Cancel
                    </button>
                  ) : null}
                  {canManage && !active ? (
                    <button type="button" className={secondaryButton} disabled={rerun.isPending} onClick={() => rerun.mutate(run.id)}>
                      Rerun
                    </button>
                  ) : null}
                </div>
              </div>
              <div className="mt-3 flex items-center gap-3">
                <div className="h-2 flex-1 overflow-hidden rounded-full bg-ink-50" role="progressbar" aria-valuenow={pct} aria-valuemin={0} aria-valuemax={100} aria-label={`${runName(run.number)} progress`}>
                  <div className={`h-full rounded-full ${run.state === "failed" ? "bg-red-400" : run.state === "cancelled" ? "bg-stone-300" : "bg-ochre-500"} transition-all`} style={{ width: `${pct}%` }} />
                </div>
                <span className="w-60 shrink-0 text-right text-xs tabular-nums text-ink-500">
                  {pct}% · {run.periodsDone} / {run.resultsTotal} indicator-periods
                </span>
              </div>
              <dl className="mt-3 grid grid-cols-2 gap-x-6 gap-y-1 text-xs text-ink-500 sm:grid-cols-4">
                <div>
                  <dt className="inline text-ink-400">Weights </dt>
                  <dd className="inline text-ink-700">{weightsLabel(run.params.weights, run.params.transform)}</dd>
                </div>
                <div>
                  <dt className="inline text-ink-400">Permutations </dt>
                  <dd className="inline tabular-nums text-ink-700">{run.params.permutations.toLocaleString("en-GB")}</dd>
                </div>
                <div>
                  <dt className="inline text-ink-400">Seed </dt>
                  <dd className="inline font-mono text-ink-700">{run.params.seed}</dd>
                </div>
                <div>
                  <dt className="inline text-ink-400">Correction </dt>
                  <dd className="inline text-ink-700">
                    {run.params.correction === "fdr" ? "FDR" : run.params.correction}, α = {run.params.alpha}
                  </dd>
                </div>
                <div className="col-span-2" data-testid={`run-${run.id}-local-p`}>
                  <dt className="inline text-ink-400">Local p-values </dt>
                  <dd className="inline text-ink-700">
                    {!run.params.local
                      ? "not computed"
                      : run.params.sequentialExtremes !== undefined
                        ? `sequential (Besag & Clifford, h = ${run.params.sequentialExtremes})`
                        : "fixed count"}
                  </dd>
                </div>
                {run.params.controlFor?.length ? (
                  <div className="col-span-2" data-testid={`run-${run.id}-control-for`}>
                    <dt className="inline text-ink-400">Controls for </dt>
                    <dd className="inline text-ink-700">{run.params.controlFor.join(", ")}</dd>
                  </div>
                ) : null}
                {run.params.empiricalBayes ? (
                  <div className="col-span-2" data-testid={`run-${run.id}-rates`}>
                    <dt className="inline text-ink-400">Rates </dt>
                    <dd className="inline text-ink-700">
                      {EB_LABEL} ({run.params.empiricalBayes.map((d) => d.indicator).join(", ")})
                    </dd>
                  </div>
                ) : null}
                <div className="col-span-2">
                  <dt className="inline text-ink-400">Islands </dt>
                  <dd className="inline text-ink-700">{ISLAND_POLICY_LABELS[run.params.islandPolicy]}</dd>
                </div>
                <div className="col-span-2">
                  <dt className="inline text-ink-400">Started by </dt>
                  <dd className="inline text-ink-700">
                    {run.createdBy ?? (run.origin === "demo" ? "demo set-up" : "—")} · {new Date(run.createdAt).toLocaleString("en-GB")}
                  </dd>
                </div>
              </dl>
              {run.error ? <p className="mt-2 text-sm text-red-700">{run.error}</p> : null}
            </li>
          );
        })}
      </ul>
    </div>
  );
}

function StartRunForm({ slug }: { slug: string }) {
  const client = useQueryClient();
  const options = useQuery(runOptionsQuery(slug));
  const [versionId, setVersionId] = useState<number | null>(null);
  const [weights, setWeights] = useState("queen");
  const [transform, setTransform] = useState("row-standardised");
  const [islandPolicy, setIslandPolicy] = useState("exclude");
  const [permutations, setPermutations] = useState("999");
  const [seed, setSeed] = useState("");
  const [alpha, setAlpha] = useState("0.05");
  const [correction, setCorrection] = useState("fdr");
  const [chosen, setChosen] = useState<string[] | null>(null);
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [local, setLocal] = useState(true);
  const [sequential, setSequential] = useState(false);
  const [controlFor, setControlFor] = useState<string[]>([]);
  const [empiricalBayes, setEmpiricalBayes] = useState(false);
  const [error, setError] = useState<{ field: string | null; message: string } | null>(null);
  const [started, setStarted] = useState<{ id: number; number: number } | null>(null);

  const version = useMemo(() => {
    const list = options.data ?? [];
    return list.find((o) => o.panelVersionId === versionId) ?? list[0] ?? null;
  }, [options.data, versionId]);
  const periods = version?.periods ?? [];
  const indicators = version?.indicators ?? [];
  const selected = chosen ?? indicators.map((i) => i.code);
  // Offered only when the version has a declared rate; sent only when a chosen indicator is one.
  const rateIndicators = indicators.filter((i) => i.rate);
  const ebApplies = empiricalBayes && rateIndicators.some((i) => selected.includes(i.code));

  // Warned before start: can the smallest permutation p pass the correction? (Only for a choice the schema accepts.)
  const fromAt = from ? periods.indexOf(from) : 0;
  const toAt = to ? periods.indexOf(to) : periods.length - 1;
  const reachabilityChoice = runParamsInputSchema.safeParse({ permutations, alpha, correction });
  const reachability =
    version && reachabilityChoice.success
      ? startFormReachability({
          regions: version.regions,
          indicators: selected.length,
          periods: Math.max(0, toAt - fromAt + 1),
          permutations: reachabilityChoice.data.permutations,
          alpha: reachabilityChoice.data.alpha,
          correction: reachabilityChoice.data.correction,
          local,
          sequential,
        })
      : [];

  const start = useMutation({
    mutationFn: (body: unknown) => runsApi.start(slug, body),
    onSuccess: (r) => {
      setStarted({ id: r.runId, number: r.number });
      setError(null);
      return client.invalidateQueries({ queryKey: runsKeys.all(slug) });
    },
    onError: (e) => setError({ field: e instanceof ApiError ? e.field : null, message: e.message }),
  });

  const submit = (event: React.FormEvent) => {
    event.preventDefault();
    if (!version || start.isPending) return;
    const fromIndex = from ? periods.indexOf(from) : 0;
    const toIndex = to ? periods.indexOf(to) : periods.length - 1;
    const choice = {
      weights,
      transform,
      islandPolicy,
      permutations,
      seed: seed.trim() === "" ? undefined : seed,
      alpha,
      correction,
      indicators: selected.length === indicators.length ? undefined : selected,
      periods: fromIndex === 0 && toIndex === periods.length - 1 ? undefined : periods.slice(fromIndex, toIndex + 1),
      local,
      sequential: local && sequential,
      controlFor: controlFor.length ? controlFor : undefined,
      rates: ebApplies ? "empirical-bayes" : "raw",
    };
    const parsed = runParamsInputSchema.safeParse(choice);
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      setError({ field: issue?.path.join(".") ?? null, message: issue?.message ?? "Check the form." });
      return;
    }
    if (selected.length === 0) {
      setError({ field: "indicators", message: "Choose at least one indicator." });
      return;
    }
    if (controlFor.length && selected.every((c) => controlFor.includes(c))) {
      setError({ field: "controlFor", message: "Every indicator chosen is also a covariate: choose covariates other than the indicators you analyse." });
      return;
    }
    if (controlFor.length && version.regions < controlFor.length + 3) {
      setError({ field: "controlFor", message: `The boundaries have ${version.regions} regions; an intercept and ${controlFor.length} covariate(s) need at least ${controlFor.length + 3}.` });
      return;
    }
    if (fromIndex > toIndex) {
      setError({ field: "periods", message: "The first period must come before the last." });
      return;
    }
    start.mutate({ panelVersionId: version.panelVersionId, ...parsed.data });
  };

  const fieldError = (field: string) =>
    error && error.field === field ? (
      <p id={`run-${field}-error`} className="mt-1 text-xs text-red-700">
        {error.message}
      </p>
    ) : null;
  const invalid = (field: string) => ({ "aria-invalid": error?.field === field, "aria-describedby": error?.field === field ? `run-${field}-error` : undefined });

  return (
    <Panel title="Start a run" caption="Only published panel versions can be analysed. Leave the seed empty to draw one; it is stored with the run either way.">
      {options.isPending ? <p className="text-sm text-ink-500">Loading published panels…</p> : null}
      {options.data && options.data.length === 0 ? <Notice>There is no published panel version yet. A steward publishes panels in Intake.</Notice> : null}
      {version ? (
        <form onSubmit={submit} className="space-y-4" aria-label="Start a run">
          <div>
            <label className={labelClass} htmlFor="run-panel">
              Panel version
            </label>
            <select id="run-panel" className={inputClass} value={version.panelVersionId} onChange={(e) => { setVersionId(Number(e.target.value)); setChosen(null); setControlFor([]); setFrom(""); setTo(""); }}>
              {(options.data ?? []).map((o) => (
                <option key={o.panelVersionId} value={o.panelVersionId}>
                  {o.panelName} — version {o.version}
                </option>
              ))}
            </select>
          </div>
          <div className="grid grid-cols-2 gap-3">
            <div>
              <label className={labelClass} htmlFor="run-weights">
                Weights
              </label>
              <select id="run-weights" className={inputClass} {...invalid("weights")} value={weights} onChange={(e) => setWeights(e.target.value)}>
                {WEIGHTS_CHOICES.map((w) => (
                  <option key={w.value} value={w.value}>
                    {w.label}
                  </option>
                ))}
              </select>
              {fieldError("weights")}
            </div>
            <div>
              <label className={labelClass} htmlFor="run-transform">
                Transform
              </label>
              <select id="run-transform" className={inputClass} value={transform} onChange={(e) => setTransform(e.target.value)}>
                <option value="row-standardised">Row-standardised</option>
                <option value="binary">Binary</option>
              </select>
            </div>
          </div>
          <div>
            <label className={labelClass} htmlFor="run-islands">
              Regions without neighbours
            </label>
            <select id="run-islands" className={inputClass} value={islandPolicy} onChange={(e) => setIslandPolicy(e.target.value)}>
              {ISLAND_POLICIES.map((p) => (
                <option key={p} value={p}>
                  {ISLAND_POLICY_LABELS[p][0].toUpperCase() + ISLAND_POLICY_LABELS[p].slice(1)}
                </option>
              ))}
            </select>
          </div>
          <div className="grid grid-cols-2 gap-3">
            <div>
              <label className={labelClass} htmlFor="run-permutations">
                Permutations
              </label>
              <input id="run-permutations" className={inputClass} {...invalid("permutations")} inputMode="numeric" value={permutations} onChange={(e) => setPermutations(e.target.value)} />
              {fieldError("permutations")}
            </div>
            <div>
              <label className={labelClass} htmlFor="run-seed">
                Seed
              </label>
              <input id="run-seed" className={inputClass} {...invalid("seed")} inputMode="numeric" placeholder="drawn at start" value={seed} onChange={(e) => setSeed(e.target.value)} />
              {fieldError("seed")}
            </div>
          </div>
          <div className="grid grid-cols-2 gap-3">
            <div>
              <label className={labelClass} htmlFor="run-correction">
                Correction
              </label>
              <select id="run-correction" className={inputClass} value={correction} onChange={(e) => setCorrection(e.target.value)}>
                {CORRECTIONS.map((c) => (
                  <option key={c} value={c}>
                    {c === "fdr" ? "False discovery rate" : CORRECTION_LABELS[c][0].toUpperCase() + CORRECTION_LABELS[c].slice(1)}
                  </option>
                ))}
              </select>
            </div>
            <div>
              <label className={labelClass} htmlFor="run-alpha">
                Alpha
              </label>
              <input id="run-alpha" className={inputClass} {...invalid("alpha")} inputMode="decimal" value={alpha} onChange={(e) => setAlpha(e.target.value)} />
              {fieldError("alpha")}
            </div>
          </div>
          <fieldset>
            <legend className={labelClass}>Indicators</legend>
            <div className="mt-1 max-h-40 space-y-1 overflow-y-auto rounded-md border border-ink-100 p-2">
              {indicators.map((i) => (
                <label key={i.code} className="flex items-center gap-2 text-sm text-ink-700">
                  <input
                    type="checkbox"
                    className="accent-ochre-500"
                    checked={selected.includes(i.code)}
                    onChange={(e) => setChosen(e.target.checked ? [...selected, i.code] : selected.filter((c) => c !== i.code))}
                  />
                  {i.label}
                </label>
              ))}
            </div>
            {fieldError("indicators")}
          </fieldset>
          <fieldset>
            <legend className={labelClass}>Control for (optional)</legend>
            <p className="mt-0.5 text-xs text-ink-500">
              Each indicator is also regressed on these, and the run tests whether the clustering remains in what they leave unexplained. At most {MAX_CONTROL_FOR}.
            </p>
            <div className="mt-1 max-h-32 space-y-1 overflow-y-auto rounded-md border border-ink-100 p-2" data-testid="run-control-for">
              {indicators.map((i) => (
                <label key={i.code} className="flex items-center gap-2 text-sm text-ink-700">
                  <input
                    type="checkbox"
                    className="accent-ochre-500"
                    checked={controlFor.includes(i.code)}
                    onChange={(e) => setControlFor(e.target.checked ? [...controlFor, i.code] : controlFor.filter((c) => c !== i.code))}
                  />
                  {i.label}
                </label>
              ))}
            </div>
            {fieldError("controlFor")}
          </fieldset>
          <div className="grid grid-cols-2 gap-3">
            <div>
              <label className={labelClass} htmlFor="run-from">
                First period
              </label>
              <select id="run-from" className={inputClass} value={from || periods[0]} onChange={(e) => setFrom(e.target.value)}>
                {periods.map((p) => (
                  <option key={p}>{p}</option>
                ))}
              </select>
            </div>
            <div>
              <label className={labelClass} htmlFor="run-to">
                Last period
              </label>
              <select id="run-to" className={inputClass} value={to || periods[periods.length - 1]} onChange={(e) => setTo(e.target.value)}>
                {periods.map((p) => (
                  <option key={p}>{p}</option>
                ))}
              </select>
            </div>
          </div>
          {fieldError("periods")}
          <label className="flex items-center gap-2 text-sm text-ink-700">
            <input type="checkbox" className="accent-ochre-500" checked={local} onChange={(e) => setLocal(e.target.checked)} />
            Local clusters per region (needed for cluster maps)
          </label>
          <label className="flex items-start gap-2 text-sm text-ink-700">
            <input type="checkbox" className="mt-0.5 accent-ochre-500" checked={local && sequential} disabled={!local} onChange={(e) => setSequential(e.target.checked)} />
            <span>
              Sequential p-values for local clusters
              <span className="block text-xs text-ink-500">
                Besag &amp; Clifford (1991): a region stops drawing once {SEQUENTIAL_EXTREMES} permutations in each tail are as extreme as its own (common practice
                is 10–20), so many permutations stay cheap for regions far from significance. Regions that do not stop get exactly the fixed-count p.
              </span>
            </span>
          </label>
          {rateIndicators.length > 0 ? (
            <label className="flex items-start gap-2 text-sm text-ink-700">
              <input
                type="checkbox"
                className="mt-0.5 accent-ochre-500"
                checked={empiricalBayes}
                onChange={(e) => setEmpiricalBayes(e.target.checked)}
                data-testid="run-empirical-bayes"
              />
              <span>
                Empirical-Bayes standardised rates
                <span className="block text-xs text-ink-500">
                  Moran&apos;s I of {rateIndicators.map((i) => i.label).join(", ")} on rates standardised by their population (Assunção &amp; Reis 1999), so
                  regions with few residents do not dominate; other indicators are unchanged.
                </span>
              </span>
            </label>
          ) : null}
          <StartFormReachability warnings={reachability} />
          <div role="alert">{error && !["weights", "permutations", "seed", "alpha", "indicators", "periods", "controlFor"].includes(error.field ?? "") ? <Notice tone="error">{error.message}</Notice> : null}</div>
          <div role="status" aria-live="polite">
            {started ? (
              <Notice>
                <span data-testid="started-run" data-run-id={started.id}>
                  {runName(started.number)}
                </span>{" "}
                is queued. Its progress shows in the queue.
              </Notice>
            ) : null}
          </div>
          <button type="submit" className={`${primaryButton} w-full`} aria-disabled={start.isPending}>
            {start.isPending ? "Starting…" : "Start run"}
          </button>
        </form>
      ) : null}
    </Panel>
  );
}

"use client";

import Link from "next/link";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useRef, useState } from "react";
import { dangerButton, primaryButton } from "@/components/ui/button-styles";
import { ConfirmDialog } from "@/components/ui/confirm-dialog";
import type { BoundaryReport } from "@/lib/intake/ingest-boundaries";
import type { VersionDetail } from "@/lib/intake/queries";
import { publishCounts } from "@/lib/intake/publish-summary";
import type { PanelReport } from "@/lib/intake/report";
import { multiplierLabel, type RateProblem, type RatesReport } from "@/lib/intake/rates";
import type { VersionDiff } from "@/models/intake-types";
import { BoundaryMap } from "./boundary-map";
import { Notice, Panel, StateBadge, formatDate } from "./format";
import { intakeApi, intakeKeys, versionQuery } from "./query-options";
import { formatBytes } from "./upload-file";
import type { HarmonisationView } from "@/lib/intake/harmonisation";
import { carriedSentence, crosswalkLabel, methodLabel, periodSpan } from "@/lib/reforms/describe";
import { Cautions } from "@/components/ui/cautions";

type Kind = "boundaries" | "panel";

export function VersionScreen({ slug, kind, versionId, canCurate, workspaceName }: { slug: string; kind: Kind; versionId: number; canCurate: boolean; workspaceName: string }) {
  const version = useQuery(versionQuery(slug, kind, versionId));
  if (version.isPending) return <p className="text-sm text-ink-500">Loading the version…</p>;
  if (version.error) return <Notice tone="error">{version.error.message}</Notice>;
  const v = version.data;
  return (
    <div className="space-y-6">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div>
          <Link href={`/w/${slug}/intake`} className="text-sm text-ochre-700 hover:underline">
            ← Intake
          </Link>
          <h1 className="mt-1 text-2xl font-semibold text-ink">
            {v.parentName} <span className="text-ink-400">v{v.version}</span>
          </h1>
          <p className="mt-1 text-sm text-ink-500">
            {v.fileName} · {formatBytes(v.byteSize)} · uploaded {formatDate(v.createdAt)}
            {v.createdBy ? ` by ${v.createdBy}` : ""}
            {v.boundaryVersion ? ` · matched against boundaries v${v.boundaryVersion}` : ""}
          </p>
          <p className="mt-0.5 font-mono text-xs text-ink-500">sha256 {v.sha256}</p>
        </div>
        <div className="flex items-center gap-3">
          <StateBadge state={v.state} />
          {canCurate ? <VersionActions slug={slug} detail={v} workspaceName={workspaceName} /> : null}
        </div>
      </div>
      {v.state === "uploaded" ? <Notice>Validation is running in the background; this page updates when it finishes.</Notice> : null}
      {v.harmonisation ? <HarmonisationPanel slug={slug} view={v.harmonisation} /> : null}
      {v.diff ? <DiffView diff={v.diff} kind={kind} /> : null}
      {v.report ? kind === "panel" ? <PanelReportView report={v.report as unknown as PanelReport | FailureLike} /> : <BoundaryReportView report={v.report as unknown as BoundaryReport} /> : null}
      {kind === "boundaries" && (v.state === "validated" || v.state === "published" || v.state === "archived") ? <BoundaryMap slug={slug} versionId={v.id} /> : null}
    </div>
  );
}

/** How a harmonised version was made: source version, crosswalk, method per indicator, carried periods. */
function HarmonisationPanel({ slug, view }: { slug: string; view: HarmonisationView }) {
  const versionLink = (ref: { panelVersionId: number; panelName: string; version: number } | null, id: number | undefined) =>
    ref ? (
      <Link className="text-ochre-700 hover:underline" href={`/w/${slug}/intake/panels/${ref.panelVersionId}`}>
        {ref.panelName} v{ref.version}
      </Link>
    ) : (
      <span>version {id} (not in this workspace)</span>
    );
  const methods = Object.entries(view.methods).sort(([a], [b]) => a.localeCompare(b));
  return (
    <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_minmax(0,20rem)]">
      <Panel title="Harmonised across a boundary reform" caption={carriedSentence(view)}>
        <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-2 text-sm" data-testid="harmonisation-provenance">
          <dt className="text-ink-500">Source version</dt>
          <dd>{versionLink(view.source, view.sourcePanelVersionId)}</dd>
          <dt className="text-ink-500">Crosswalk</dt>
          <dd>
            <Link className="text-ochre-700 hover:underline" href={`/w/${slug}/intake/reforms/${view.crosswalkId}`}>
              {crosswalkLabel(view)}
            </Link>
            {view.fromBoundary && view.toBoundary ? (
              <span className="text-ink-500">
                {" "}
                · {view.fromBoundary.setName} v{view.fromBoundary.version} → {view.toBoundary.setName} v{view.toBoundary.version}
              </span>
            ) : null}
          </dd>
          <dt className="text-ink-500">Carried periods</dt>
          <dd data-testid="harmonisation-carried">{periodSpan(view.carriedPeriods)}</dd>
          <dt className="text-ink-500">First period on the new boundaries</dt>
          <dd data-testid="harmonisation-first">{view.firstPeriodOnTarget ?? "none: every period was carried"}</dd>
          {view.continuationPanelVersionId !== undefined ? (
            <>
              <dt className="text-ink-500">Observed from</dt>
              <dd>{versionLink(view.continuation, view.continuationPanelVersionId)}</dd>
            </>
          ) : null}
        </dl>
        <table className="mt-4 w-full text-sm" data-testid="harmonisation-methods">
          <thead className="text-left text-xs uppercase tracking-wider text-ink-400">
            <tr>
              <th className="py-1.5 pr-3">Indicator</th>
              <th className="py-1.5 pr-3">Method</th>
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-50">
            {methods.map(([code, method]) => (
              <tr key={code}>
                <td className="py-1.5 pr-3 font-mono text-xs">{code}</td>
                <td className="py-1.5 pr-3">{methodLabel(method)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </Panel>
      <Cautions items={["areal-weighting"]} headingId="reform-cautions-heading" heading="Carried values" className="h-fit" />
    </div>
  );
}

function PublishSummary({ detail, workspaceName }: { detail: VersionDetail; workspaceName: string }) {
  const counts = publishCounts(detail);
  const n = (value: number | null) => (value === null ? "—" : value.toLocaleString("en"));
  const list = (items: string[]) => (items.length <= 6 ? items.join(", ") : `${items.slice(0, 3).join(", ")} … ${items[items.length - 1]}`);
  return (
    <>
      <p>
        You are publishing <strong>{detail.parentName} v{detail.version}</strong> ({detail.fileName}).
      </p>
      {detail.kind === "panel" ? (
        <ul className="list-disc pl-5" data-testid="publish-counts">
          <li>{n(counts.regions)} regions</li>
          <li>
            {counts.indicators.length} indicator{counts.indicators.length === 1 ? "" : "s"}: {list(counts.indicators) || "none"}
          </li>
          <li>
            {counts.periods.length} period{counts.periods.length === 1 ? "" : "s"}: {list(counts.periods) || "none"}
          </li>
          <li>
            {n(counts.observations)} observations{counts.missing > 0 ? ` (${n(counts.missing)} of them missing values)` : ""}
          </li>
        </ul>
      ) : (
        <ul className="list-disc pl-5" data-testid="publish-counts">
          <li>{n(counts.regions)} regions with their boundaries and names</li>
        </ul>
      )}
      <p>
        Economists and subscribers of <strong>{workspaceName}</strong> will see{" "}
        {detail.kind === "panel"
          ? "these indicators, periods and values on maps, in the catalogue and in digests, and analyses can be run on them"
          : "these boundaries on maps, and panels matched against them can then be published"}
        .
      </p>
      <p className="font-medium">Published versions cannot be changed, only archived.</p>
    </>
  );
}

function VersionActions({ slug, detail, workspaceName }: { slug: string; detail: VersionDetail; workspaceName: string }) {
  const client = useQueryClient();
  const [message, setMessage] = useState<string | null>(null);
  const [confirming, setConfirming] = useState(false);
  const [done, setDone] = useState<string | null>(null);
  // The button that opened the dialog goes away once the version is published: focus moves to the outcome instead of the page body.
  const doneRef = useRef<HTMLParagraphElement>(null);
  const act = useMutation({
    mutationFn: (action: "publish" | "archive") => (action === "publish" ? intakeApi.publish(slug, detail.kind, detail.id) : intakeApi.archive(slug, detail.kind, detail.id)),
    onSuccess: async (_answer, action) => {
      setMessage(null);
      setConfirming(false);
      await client.invalidateQueries({ queryKey: intakeKeys.all(slug) });
      setDone(action === "publish" ? `${detail.parentName} v${detail.version} is published.` : `${detail.parentName} v${detail.version} is archived.`);
      requestAnimationFrame(() => doneRef.current?.focus());
    },
    onError: (e) => {
      setConfirming(false);
      setMessage(e.message);
    },
  });
  return (
    <div className="flex flex-col items-end gap-2">
      <div className="flex gap-2">
        {detail.state === "validated" ? (
          <button type="button" className={primaryButton} disabled={act.isPending} onClick={() => setConfirming(true)}>
            Publish…
          </button>
        ) : null}
        <ConfirmDialog
          open={confirming}
          title={`Publish ${detail.parentName} v${detail.version}?`}
          confirmLabel="Publish"
          busy={act.isPending}
          onConfirm={() => act.mutate("publish")}
          onCancel={() => setConfirming(false)}
          testId="publish-dialog"
        >
          <PublishSummary detail={detail} workspaceName={workspaceName} />
        </ConfirmDialog>
        {detail.state === "validated" || detail.state === "published" ? (
          <button
            type="button"
            className={dangerButton}
            disabled={act.isPending}
            onClick={() => {
              if (window.confirm(`Archive v${detail.version} of ${detail.parentName}? Analyses will no longer offer it.`)) act.mutate("archive");
            }}
          >
            Archive
          </button>
        ) : null}
      </div>
      {message ? <Notice tone="error">{message}</Notice> : null}
      <p ref={doneRef} tabIndex={-1} role="status" className="text-sm text-ink-600" data-testid="version-action-outcome">
        {done ?? ""}
      </p>
    </div>
  );
}

function ListWithCount({ items, total, empty, testId }: { items: readonly string[]; total: number; empty: string; testId?: string }) {
  if (total === 0) return <p className="text-sm text-ink-400">{empty}</p>;
  return (
    <p className="text-sm text-ink-700" data-testid={testId}>
      {items.join(", ")}
      {total > items.length ? <span className="text-ink-400"> … and {total - items.length} more ({total} in all)</span> : null}
    </p>
  );
}

function DiffView({ diff, kind }: { diff: VersionDiff; kind: Kind }) {
  if (diff.previousVersion === null) {
    return (
      <Panel title="Difference from the previous version">
        <p className="text-sm text-ink-500">This is the first validated version; there is nothing to compare with.</p>
      </Panel>
    );
  }
  return (
    <Panel title={`Difference from v${diff.previousVersion}`} caption="Compared with the latest earlier version that passed validation.">
      <div className="grid gap-4 sm:grid-cols-2" data-testid="version-diff">
        <div>
          <h3 className="text-xs font-semibold uppercase tracking-wide text-ink-400">Regions added ({diff.regions.addedCount})</h3>
          <ListWithCount items={diff.regions.added} total={diff.regions.addedCount} empty="none" />
        </div>
        <div>
          <h3 className="text-xs font-semibold uppercase tracking-wide text-ink-400">Regions removed ({diff.regions.removedCount})</h3>
          <ListWithCount items={diff.regions.removed} total={diff.regions.removedCount} empty="none" />
        </div>
        {kind === "panel" && diff.indicators && diff.periods ? (
          <>
            <div>
              <h3 className="text-xs font-semibold uppercase tracking-wide text-ink-400">Indicators</h3>
              <p className="text-sm text-ink-700">
                added: {diff.indicators.added.join(", ") || "none"}; removed: {diff.indicators.removed.join(", ") || "none"}
              </p>
            </div>
            <div>
              <h3 className="text-xs font-semibold uppercase tracking-wide text-ink-400">Periods</h3>
              <p className="text-sm text-ink-700">
                added: {diff.periods.added.join(", ") || "none"}; removed: {diff.periods.removed.join(", ") || "none"}
              </p>
            </div>
          </>
        ) : null}
      </div>
      {diff.changedValues !== undefined ? (
        <div className="mt-4">
          <p className="text-sm font-medium text-ink" data-testid="changed-values">
            {diff.changedValues === 0 ? "No value present in both versions changed." : `${diff.changedValues.toLocaleString("en")} value${diff.changedValues === 1 ? "" : "s"} present in both versions changed.`}
          </p>
          {diff.changedExamples && diff.changedExamples.length > 0 ? (
            <table className="mt-2 min-w-full text-sm">
              <caption className="pb-1 text-left text-xs text-ink-400">
                {diff.changedExamples.length < diff.changedValues ? `First ${diff.changedExamples.length} of ${diff.changedValues}` : "All changes"}, by indicator, period and region
              </caption>
              <thead>
                <tr className="border-b border-ink-100 text-left text-xs uppercase text-ink-400">
                  <th className="py-1 pr-3 font-medium">Indicator</th>
                  <th className="py-1 pr-3 font-medium">Period</th>
                  <th className="py-1 pr-3 font-medium">Region</th>
                  <th className="py-1 pr-3 text-right font-medium">Before</th>
                  <th className="py-1 text-right font-medium">After</th>
                </tr>
              </thead>
              <tbody>
                {diff.changedExamples.map((e) => (
                  <tr key={`${e.indicator}|${e.period}|${e.region}`}>
                    <td className="py-0.5 pr-3">{e.indicator}</td>
                    <td className="py-0.5 pr-3">{e.period}</td>
                    <td className="py-0.5 pr-3">{e.region}</td>
                    <td className="py-0.5 pr-3 text-right tabular-nums">{e.before ?? "missing"}</td>
                    <td className="py-0.5 text-right tabular-nums">{e.after ?? "missing"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : null}
        </div>
      ) : null}
    </Panel>
  );
}

interface FailureLike {
  ok: false;
  stage: "ingest";
  errors: { row: number | null; column: string | null; message: string }[];
  errorCount: number;
}

function ProblemTable({ title, problems, total, locator }: { title: string; problems: { row?: number | null; column?: string | null; feature?: number | null; region?: string | null; message: string }[]; total: number; locator: "row" | "feature" }) {
  if (total === 0) return null;
  return (
    <div>
      <h3 className="text-sm font-semibold text-ink">
        {title} <span className="font-normal text-ink-400">({problems.length < total ? `first ${problems.length} of ${total.toLocaleString("en")}` : total})</span>
      </h3>
      <div className="mt-1 max-h-96 overflow-auto" tabIndex={0} role="region" aria-label={title}>
        <table className="min-w-full text-sm" data-testid={`report-${title.toLowerCase()}`}>
          <thead>
            <tr className="border-b border-ink-100 text-left text-xs uppercase text-ink-400">
              {locator === "row" ? (
                <>
                  <th className="py-1 pr-3 font-medium">Row</th>
                  <th className="py-1 pr-3 font-medium">Column</th>
                </>
              ) : (
                <>
                  <th className="py-1 pr-3 font-medium">Feature</th>
                  <th className="py-1 pr-3 font-medium">Region</th>
                </>
              )}
              <th className="py-1 font-medium">Problem</th>
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-50">
            {problems.map((p, i) => (
              <tr key={i}>
                <td className="py-1 pr-3 tabular-nums text-ink-600">{locator === "row" ? (p.row === null || p.row === undefined ? "file" : p.row === 0 ? "header" : p.row) : (p.feature ?? "file")}</td>
                <td className="py-1 pr-3 text-ink-600">{locator === "row" ? (p.column ?? "—") : (p.region ?? "—")}</td>
                <td className="py-1 text-ink-800">{p.message}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div>
      <dt className="text-xs uppercase tracking-wide text-ink-400">{label}</dt>
      <dd className="text-sm text-ink-800">{children}</dd>
    </div>
  );
}

const DELIMITER_NAMES: Record<string, string> = { ",": "comma", ";": "semicolon", "\t": "tab" };

function PanelReportView({ report }: { report: PanelReport | FailureLike }) {
  if ("stage" in report) {
    return (
      <Panel title="Validation report">
        <ProblemTable title="Errors" problems={report.errors} total={report.errorCount} locator="row" />
      </Panel>
    );
  }
  const missingEntries = Object.entries(report.missing).filter(([, n]) => n > 0);
  const absentEntries = Object.entries(report.absent ?? {}).filter(([, n]) => n > 0);
  return (
    <Panel
      title="Validation report"
      caption={`Rows are numbered from the first line after the header (row 1); blank lines count.`}
      actions={report.ok ? <span className="text-sm font-medium text-[#115e59]">Usable: no errors</span> : <span className="text-sm font-medium text-red-700">Not usable: {report.errorCount.toLocaleString("en")} error(s)</span>}
    >
      <div className="space-y-5" data-testid="validation-report" data-ok={String(report.ok)}>
        <dl className="grid gap-3 sm:grid-cols-3 lg:grid-cols-4">
          <Fact label="Rows">{report.rows.toLocaleString("en")}</Fact>
          <Fact label="Observations">{report.observations.toLocaleString("en")}</Fact>
          <Fact label="Layout">{report.layout ?? "—"}</Fact>
          <Fact label="Encoding">UTF-8{report.encoding.bom ? " with BOM" : ""}</Fact>
          <Fact label="Delimiter">
            {report.delimiter ? DELIMITER_NAMES[report.delimiter] ?? report.delimiter : "—"} {report.delimiterDetected ? "(detected)" : ""}
          </Fact>
          <Fact label="Decimal separator">{report.decimal === "," ? "comma" : "point"}</Fact>
          <Fact label="Regions in panel">
            {report.regions.inPanel.toLocaleString("en")}
            {report.regions.matched !== null ? ` (${report.regions.matched} matched)` : ""}
          </Fact>
          <Fact label="Duplicates">{report.duplicates.count}</Fact>
        </dl>
        <div>
          <h3 className="text-sm font-semibold text-ink">
            Periods ({report.periods.length}
            {report.granularity ? `, ${report.granularity}s` : ""})
          </h3>
          <p className="text-sm text-ink-700">{report.periods.length ? `${report.periods[0]} … ${report.periods[report.periods.length - 1]}` : "none"}</p>
        </div>
        <div>
          <h3 className="text-sm font-semibold text-ink">Indicators ({report.indicators.length})</h3>
          <p className="text-sm text-ink-700">{report.indicators.join(", ") || "none"}</p>
        </div>
        <div className="grid gap-4 sm:grid-cols-2">
          <div>
            <h3 className="text-sm font-semibold text-ink">In the panel, not on the map ({report.regions.inPanelNotInBoundariesCount})</h3>
            <ListWithCount items={report.regions.inPanelNotInBoundaries} total={report.regions.inPanelNotInBoundariesCount} empty="none" testId="unknown-regions" />
          </div>
          <div>
            <h3 className="text-sm font-semibold text-ink">On the map, never in the panel ({report.regions.inBoundariesNotInPanelCount})</h3>
            <ListWithCount items={report.regions.inBoundariesNotInPanel} total={report.regions.inBoundariesNotInPanelCount} empty="none" />
          </div>
        </div>
        {missingEntries.length || absentEntries.length ? (
          <div>
            <h3 className="text-sm font-semibold text-ink">Missing values per indicator</h3>
            <p className="text-xs text-ink-400">Given as missing (empty, NA, ..) — never read as zero — and absent (no row for a region and period).</p>
            <table className="mt-1 text-sm">
              <thead>
                <tr className="text-left text-xs uppercase text-ink-400">
                  <th className="py-1 pr-6 font-medium">Indicator</th>
                  <th className="py-1 pr-6 text-right font-medium">Missing</th>
                  <th className="py-1 text-right font-medium">Absent</th>
                </tr>
              </thead>
              <tbody>
                {report.indicators.map((code) => (
                  <tr key={code}>
                    <td className="py-0.5 pr-6">{code}</td>
                    <td className="py-0.5 pr-6 text-right tabular-nums">{report.missing[code] ?? 0}</td>
                    <td className="py-0.5 text-right tabular-nums">{report.absent?.[code] ?? 0}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
        {report.rates && report.rates.declarations.length > 0 ? <RatesSection rates={report.rates} /> : null}
        <ProblemTable title="Errors" problems={report.errors} total={report.errorCount} locator="row" />
        <ProblemTable title="Warnings" problems={report.warnings} total={report.warningCount} locator="row" />
      </div>
    </Panel>
  );
}

const RATE_PROBLEM_LABELS: Record<RateProblem["kind"], string> = {
  "negative-events": "negative events",
  "negative-population": "negative population",
  "missing-population": "population missing",
  "zero-population": "population is 0",
  "events-exceed-population": "events above population",
  "rate-disagrees": "rate disagrees",
};

/** The rates in force for this version, whether each was derived, and each problem by region, period and indicator. */
function RatesSection({ rates }: { rates: RatesReport }) {
  return (
    <div data-testid="report-rates">
      <h3 className="text-sm font-semibold text-ink">Rates</h3>
      <ul className="mt-1 space-y-1 text-sm text-ink-700">
        {rates.declarations.map((d) => (
          <li key={d.indicator} data-testid={`report-rate-${d.indicator}`}>
            <code>{d.indicator}</code> = <code>{d.events}</code> / <code>{d.population}</code> × {d.multiplier.toLocaleString("en")} ({multiplierLabel(d.multiplier)}), declared{" "}
            {d.source === "file" ? "in the file" : "on the indicator"}.{" "}
            {d.derived
              ? `Not in the file: derived at ingest from events and population — ${d.values.toLocaleString("en")} value(s), ${d.missing.toLocaleString("en")} left missing.`
              : `${d.values.toLocaleString("en")} rate value(s) of the file checked against events and population.`}{" "}
            {d.problems === 0 ? "No problems." : `${d.problems.toLocaleString("en")} problem(s); no row was dropped.`}
          </li>
        ))}
      </ul>
      {rates.problemCount > 0 ? (
        <div className="mt-2 max-h-96 overflow-auto" tabIndex={0} role="region" aria-label="Rate problems">
          <table className="min-w-full text-sm" data-testid="report-rate-problems">
            <caption className="pb-1 text-left text-xs text-ink-400">
              {rates.problems.length < rates.problemCount ? `First ${rates.problems.length} of ${rates.problemCount.toLocaleString("en")}` : `All ${rates.problemCount}`} rate problem(s), by region, period and indicator
            </caption>
            <thead>
              <tr className="border-b border-ink-100 text-left text-xs uppercase text-ink-400">
                <th className="py-1 pr-3 font-medium">Region</th>
                <th className="py-1 pr-3 font-medium">Period</th>
                <th className="py-1 pr-3 font-medium">Indicator</th>
                <th className="py-1 pr-3 font-medium">Row</th>
                <th className="py-1 pr-3 font-medium">Kind</th>
                <th className="py-1 font-medium">Problem</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-ink-50">
              {rates.problems.map((p, i) => (
                <tr key={i}>
                  <td className="py-1 pr-3">{p.region}</td>
                  <td className="py-1 pr-3">{p.period}</td>
                  <td className="py-1 pr-3">{p.indicator}</td>
                  <td className="py-1 pr-3 tabular-nums text-ink-600">{p.row ?? "—"}</td>
                  <td className="py-1 pr-3 text-ink-600">{RATE_PROBLEM_LABELS[p.kind]}</td>
                  <td className="py-1 text-ink-800">{p.message}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </div>
  );
}

function BoundaryReportView({ report }: { report: BoundaryReport }) {
  return (
    <Panel
      title="Validation report"
      caption="Features are numbered from 1 in the order of the chosen object."
      actions={report.ok ? <span className="text-sm font-medium text-[#115e59]">Usable: no errors</span> : <span className="text-sm font-medium text-red-700">Not usable: {report.errorCount} error(s)</span>}
    >
      <div className="space-y-5" data-testid="validation-report" data-ok={String(report.ok)}>
        <dl className="grid gap-3 sm:grid-cols-3 lg:grid-cols-4">
          <Fact label="Format">{report.sourceFormat === "geojson" ? "GeoJSON (converted to TopoJSON)" : (report.sourceFormat ?? "—")}</Fact>
          <Fact label="Object · code property">
            {report.object} · {report.idProperty}
          </Fact>
          <Fact label="Regions">{report.regionCount.toLocaleString("en")}</Fact>
          <Fact label="Coordinates">{report.coordinates === "planar" ? "planar (projected)" : report.coordinates === "lonlat" ? "longitude/latitude" : "—"}</Fact>
          {report.contiguity ? (
            <>
              <Fact label="Queen neighbours per region">{report.contiguity.meanNeighbours.toFixed(2)}</Fact>
              <Fact label="Regions with no neighbour">{report.contiguity.islands.length}</Fact>
              <Fact label="Connected groups">{report.contiguity.components}</Fact>
            </>
          ) : null}
        </dl>
        <ProblemTable title="Errors" problems={report.errors} total={report.errorCount} locator="feature" />
        <ProblemTable title="Warnings" problems={report.warnings} total={report.warningCount} locator="feature" />
      </div>
    </Panel>
  );
}

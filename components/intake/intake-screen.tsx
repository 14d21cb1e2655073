"use client";

import Link from "next/link";
import { useQuery } from "@tanstack/react-query";
import type { VersionSummary } from "@/lib/intake/queries";
import { Notice, Panel, StateBadge, formatDate } from "./format";
import { IndicatorsEditor } from "./indicators-editor";
import { PanelLayoutHelp } from "./panel-layout-help";
import { overviewQuery } from "./query-options";
import { UploadWizard } from "./upload-wizard";
import { formatBytes } from "./upload-file";

export function IntakeScreen({ slug }: { slug: string }) {
  const overview = useQuery(overviewQuery(slug));
  if (overview.isPending) return <p className="text-sm text-ink-500">Loading boundaries and panels…</p>;
  if (overview.error) return <Notice tone="error">{overview.error.message}</Notice>;
  const data = overview.data;
  return (
    <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_400px]">
      <div className="space-y-6">
        <Panel
          title="Boundaries"
          caption={
            data.canCurate
              ? "Each boundary set keeps every uploaded version. Panels are matched against a validated version; analyses use published ones."
              : "Published boundary versions. Unpublished uploads are visible to stewards and managers only."
          }
        >
          {data.boundarySets.length === 0 ? <Notice>No boundaries yet.</Notice> : null}
          <div className="space-y-5">
            {data.boundarySets.map((set) => (
              <VersionTable key={set.id} title={set.name} kind="boundaries" slug={slug} versions={set.versions} countLabel="Regions" />
            ))}
          </div>
        </Panel>
        <Panel
          title="Panels"
          caption="Indicator panels by region and period. A new version shows what changed since the previous one: regions, indicators and periods added or removed, and how many values changed."
        >
          {data.panels.length === 0 ? <Notice>No panels yet.</Notice> : null}
          <div className="space-y-5">
            {data.panels.map((panel) => (
              <VersionTable
                key={panel.id}
                title={panel.name}
                subtitle={`Regions from ${panel.boundarySetName}`}
                kind="panel"
                slug={slug}
                versions={panel.versions}
                countLabel="Rows"
              />
            ))}
          </div>
        </Panel>
        <IndicatorsEditor slug={slug} indicators={data.indicators} canEdit={data.canCurate} />
      </div>
      {data.canCurate ? (
        <div className="space-y-6">
          <UploadWizard slug={slug} boundarySets={data.boundarySets} panels={data.panels} />
          <PanelLayoutHelp open={data.panels.length === 0} />
        </div>
      ) : null}
    </div>
  );
}

function VersionTable({
  title,
  subtitle,
  kind,
  slug,
  versions,
  countLabel,
}: {
  title: string;
  subtitle?: string;
  kind: "boundaries" | "panel";
  slug: string;
  versions: VersionSummary[];
  countLabel: string;
}) {
  const path = kind === "panel" ? "panels" : "boundaries";
  return (
    <div data-testid={`${kind}-${title}`}>
      <h3 className="text-sm font-semibold text-ink">{title}</h3>
      {subtitle ? <p className="text-xs text-ink-400">{subtitle}</p> : null}
      <div className="mt-2 overflow-x-auto">
        <table className="min-w-full text-sm">
          <thead>
            <tr className="border-b border-ink-100 text-left text-xs uppercase tracking-wide text-ink-400">
              <th className="py-1.5 pr-3 font-medium">Version</th>
              <th className="py-1.5 pr-3 font-medium">State</th>
              <th className="py-1.5 pr-3 font-medium">File</th>
              <th className="py-1.5 pr-3 text-right font-medium">{countLabel}</th>
              <th className="py-1.5 pr-3 font-medium">Problems</th>
              <th className="py-1.5 pr-3 font-medium">Change</th>
              <th className="py-1.5 font-medium">Uploaded</th>
            </tr>
          </thead>
          <tbody className="divide-y divide-ink-50">
            {versions.map((v) => (
              <tr key={v.id} data-testid={`${kind}-version-${v.id}`}>
                <td className="py-2 pr-3">
                  <Link className="font-medium text-ochre-700 underline-offset-2 hover:underline" href={`/w/${slug}/intake/${path}/${v.id}`}>
                    v{v.version}
                  </Link>
                </td>
                <td className="py-2 pr-3">
                  <StateBadge state={v.state} />
                </td>
                <td className="max-w-[14rem] truncate py-2 pr-3 text-ink-600" title={`${v.fileName} · sha256 ${v.sha256}`}>
                  {v.fileName} <span className="text-ink-500">· {formatBytes(v.byteSize)}</span>
                </td>
                <td className="py-2 pr-3 text-right tabular-nums">{v.count?.toLocaleString("en") ?? "—"}</td>
                <td className="py-2 pr-3 text-ink-600">
                  {v.errorCount ? <span className="text-red-700">{v.errorCount} error{v.errorCount === 1 ? "" : "s"}</span> : null}
                  {v.errorCount && v.warningCount ? ", " : null}
                  {v.warningCount ? <span>{v.warningCount} warning{v.warningCount === 1 ? "" : "s"}</span> : null}
                  {!v.errorCount && !v.warningCount ? <span className="text-ink-500">—</span> : null}
                </td>
                <td className="py-2 pr-3 text-ink-600">{v.diffSummary ?? <span className="text-ink-500">first version</span>}</td>
                <td className="py-2 text-ink-500">
                  {formatDate(v.createdAt)}
                  {v.createdBy ? <span className="text-ink-500"> · {v.createdBy}</span> : null}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

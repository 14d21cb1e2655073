"use client";

import { useRouter } from "next/navigation";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useRef, useState } from "react";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { ConfirmDialog } from "@/components/ui/confirm-dialog";
import type { BoundaryUploadPreview, PanelUploadPreview, UploadTicket } from "@/lib/intake/service";
import { headerPeriod } from "@/lib/intake/mapping";
import { mismatchWarning, type CandidateMatch, type TargetSuggestion } from "@/lib/intake/version-target";
import type { BoundarySetView, PanelView } from "@/lib/intake/queries";
import type { ColumnMapping } from "@/lib/intake/schemas";
import { Notice, Panel } from "./format";
import { intakeApi, intakeKeys, previewQuery } from "./query-options";
import { formatBytes, putWithProgress, sha256OfFile } from "./upload-file";

const MAX_BYTES = 200 * 1024 * 1024;

type Kind = "boundaries" | "panel";
type Phase =
  | { step: "choose" }
  | { step: "hashing"; file: File }
  | { step: "uploading"; file: File; fraction: number }
  | { step: "checking"; file: File }
  | { step: "describe"; file: File; uploadId: string };

/**
 * Upload in four steps: checksum in the browser, PUT straight to storage with
 * a progress bar, the server's size and checksum check, then the description
 * (which boundary set or panel, which columns) that starts validation.
 */
export function UploadWizard({ slug, boundarySets, panels }: { slug: string; boundarySets: BoundarySetView[]; panels: PanelView[] }) {
  const [kind, setKind] = useState<Kind>("panel");
  const [phase, setPhase] = useState<Phase>({ step: "choose" });
  const [error, setError] = useState<string | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);

  const start = async (file: File) => {
    setError(null);
    if (file.size > MAX_BYTES) {
      setError(`'${file.name}' is ${formatBytes(file.size)}; the limit is 200 MB. Split the panel by indicator or period, or simplify the boundaries.`);
      return;
    }
    if (file.size === 0) {
      setError(`'${file.name}' is empty.`);
      return;
    }
    try {
      setPhase({ step: "hashing", file });
      const sha256 = await sha256OfFile(file);
      const ticket: UploadTicket = await intakeApi.createUpload(slug, { kind, fileName: file.name, size: file.size, sha256 });
      setPhase({ step: "uploading", file, fraction: 0 });
      await putWithProgress(ticket.url, file, ticket.contentType, (fraction) => setPhase({ step: "uploading", file, fraction }));
      setPhase({ step: "checking", file });
      const checked = await intakeApi.completeUpload(slug, ticket.uploadId);
      if (checked.state !== "received") throw new Error(checked.error ?? "The stored file did not match what was sent. Upload it again.");
      setPhase({ step: "describe", file, uploadId: ticket.uploadId });
    } catch (err) {
      setError(err instanceof Error ? err.message : String(err));
      setPhase({ step: "choose" });
      if (inputRef.current) inputRef.current.value = "";
    }
  };

  const reset = () => {
    setPhase({ step: "choose" });
    setError(null);
    if (inputRef.current) inputRef.current.value = "";
  };

  return (
    <Panel title="Upload" caption="Files go straight to storage (up to 200 MB); the server then checks their size and SHA-256 before anything is validated.">
      <div className="space-y-4" data-testid="upload-wizard">
        <p role="status" aria-live="polite" className="sr-only" data-testid="upload-announcer">
          {phase.step === "hashing"
            ? `Computing the checksum of ${phase.file.name}.`
            : phase.step === "uploading"
              ? `Uploading ${phase.file.name}.`
              : phase.step === "checking"
                ? "Upload finished; checking the stored file."
                : phase.step === "describe"
                  ? `Upload complete: ${phase.file.name} is stored and checked. Now say how to read it.`
                  : ""}
        </p>
        {phase.step === "choose" ? (
          <>
            <fieldset>
              <legend className={labelClass}>What are you uploading?</legend>
              <div className="mt-2 flex gap-4 text-sm">
                {(["panel", "boundaries"] as const).map((k) => (
                  <label key={k} className="flex items-center gap-2">
                    <input type="radio" name="upload-kind" value={k} checked={kind === k} onChange={() => setKind(k)} />
                    {k === "panel" ? "Indicator panel (CSV)" : "Boundaries (TopoJSON or GeoJSON)"}
                  </label>
                ))}
              </div>
            </fieldset>
            <div>
              <label className={labelClass} htmlFor="upload-file">
                File
              </label>
              <input
                ref={inputRef}
                id="upload-file"
                data-testid="upload-file"
                type="file"
                accept={kind === "panel" ? ".csv,.tsv,.txt,text/csv" : ".topojson,.geojson,.json,application/json"}
                className="mt-1 block w-full text-sm text-ink-600 file:mr-3 file:rounded-md file:border-0 file:bg-ink-50 file:px-3 file:py-1.5 file:text-sm file:font-medium file:text-ink"
                onChange={(e) => {
                  const file = e.target.files?.[0];
                  if (file) void start(file);
                }}
              />
            </div>
          </>
        ) : null}
        {phase.step === "hashing" ? <Notice>Computing the checksum of {phase.file.name}…</Notice> : null}
        {phase.step === "uploading" ? <Progress file={phase.file} fraction={phase.fraction} /> : null}
        {phase.step === "checking" ? <Notice>Checking the stored file (size and checksum)…</Notice> : null}
        <div role="alert">{error ? <Notice tone="error">{error}</Notice> : null}</div>
        {phase.step === "describe" ? (
          <>
            <Notice tone="success">
              {phase.file.name} ({formatBytes(phase.file.size)}) arrived intact. Now say how to read it.
            </Notice>
            {kind === "panel" ? (
              <PanelForm slug={slug} uploadId={phase.uploadId} boundarySets={boundarySets} panels={panels} onCancel={reset} />
            ) : (
              <BoundaryForm slug={slug} uploadId={phase.uploadId} boundarySets={boundarySets} onCancel={reset} />
            )}
          </>
        ) : null}
      </div>
    </Panel>
  );
}

function Progress({ file, fraction }: { file: File; fraction: number }) {
  const pct = Math.round(fraction * 100);
  return (
    <div>
      <div className="flex justify-between text-sm text-ink-600">
        <span className="truncate">{file.name}</span>
        <span className="tabular-nums">
          {formatBytes(file.size * fraction)} of {formatBytes(file.size)}
        </span>
      </div>
      <div role="progressbar" aria-label="Upload progress" aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct} data-testid="upload-progress" className="mt-1 h-2 overflow-hidden rounded-full bg-ink-100">
        <div className="h-full bg-ochre-500 transition-[width]" style={{ width: `${pct}%` }} />
      </div>
    </div>
  );
}

function useCreateVersion(slug: string, kind: Kind) {
  const router = useRouter();
  const client = useQueryClient();
  return useMutation({
    mutationFn: (body: unknown) => (kind === "panel" ? intakeApi.createPanelVersion(slug, body) : intakeApi.createBoundaryVersion(slug, body)),
    onSuccess: async (created) => {
      await client.invalidateQueries({ queryKey: intakeKeys.all(slug) });
      router.push(`/w/${slug}/intake/${kind === "panel" ? "panels" : "boundaries"}/${created.id}`);
    },
  });
}

function BoundaryForm({ slug, uploadId, boundarySets, onCancel }: { slug: string; uploadId: string; boundarySets: BoundarySetView[]; onCancel: () => void }) {
  const preview = useQuery(previewQuery(slug, uploadId));
  if (preview.isPending) return <p className="text-sm text-ink-500">Reading the file…</p>;
  if (preview.error) return <Notice tone="error">{preview.error.message}</Notice>;
  if (preview.data.kind !== "boundaries") return <Notice tone="error">This upload is not a boundary file.</Notice>;
  return <BoundaryFormFields slug={slug} uploadId={uploadId} preview={preview.data.preview} boundarySets={boundarySets} onCancel={onCancel} />;
}

function BoundaryFormFields({
  slug,
  uploadId,
  preview,
  boundarySets,
  onCancel,
}: {
  slug: string;
  uploadId: string;
  preview: BoundaryUploadPreview;
  boundarySets: BoundarySetView[];
  onCancel: () => void;
}) {
  const objects = preview.summary?.objects ?? [];
  // null until the steward picks a set: until then the choice follows the codes of the chosen object and property.
  const [chosenSetId, setChosenSetId] = useState<string | null>(null);
  const [setName, setSetName] = useState("");
  const [objectName, setObjectName] = useState(objects[0]?.name ?? "");
  const object = objects.find((o) => o.name === objectName);
  const idCandidates = object?.candidateIdProperties.length ? object.candidateIdProperties : (object?.properties.map((p) => p.name) ?? []);
  const [idProperty, setIdProperty] = useState(idCandidates[0] ?? "");
  const [nameProperty, setNameProperty] = useState(object?.properties.find((p) => /name/i.test(p.name))?.name ?? "");
  const [confirming, setConfirming] = useState<CandidateMatch | null>(null);
  const create = useCreateVersion(slug, "boundaries");
  const target = preview.targets.find((t) => t.object === objectName && t.idProperty === idProperty)?.suggestion ?? null;
  const setId = chosenSetId ?? (target?.choice === "version" && target.target ? String(target.target.id) : "new");
  if (!preview.summary) return <Notice tone="error">{preview.problem ?? "The file could not be read as TopoJSON or GeoJSON."}</Notice>;
  const submit = () =>
    create.mutate({
      uploadId,
      ...(setId === "new" ? { setName } : { boundarySetId: Number(setId) }),
      objectName,
      idProperty,
      nameProperty: nameProperty || null,
    });
  const chosenMatch = target?.candidates.find((c) => String(c.id) === setId) ?? null;
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        // A version of a set the codes do not match is allowed, but only after saying how little they overlap.
        if (chosenMatch && !chosenMatch.matches) setConfirming(chosenMatch);
        else submit();
      }}
    >
      <p className="text-xs text-ink-500">
        {preview.summary.sourceFormat === "geojson" ? "GeoJSON: it will be converted to TopoJSON so neighbours share borders exactly. " : "TopoJSON. "}
        Coordinates look {preview.summary.coordinates === "planar" ? "projected (planar)" : "like longitude/latitude"}.
      </p>
      <Field label="Boundary set">
        <select className={inputClass} value={setId} onChange={(e) => setChosenSetId(e.target.value)} aria-label="Boundary set" data-testid="boundary-set-choice">
          <option value="new">A new boundary set…</option>
          {boundarySets.map((s) => (
            <option key={s.id} value={s.id}>
              New version of {s.name}
            </option>
          ))}
        </select>
        {setId === "new" ? <input className={`${inputClass} mt-2`} placeholder="Name, e.g. Districts 2024" aria-label="Name of the new boundary set" value={setName} onChange={(e) => setSetName(e.target.value)} required /> : null}
        <TargetNote suggestion={target} chosen={setId} what="region" kind="boundary set" />
      </Field>
      <Field label="Object holding the regions">
        <select className={inputClass} value={objectName} onChange={(e) => setObjectName(e.target.value)} aria-label="Object holding the regions">
          {objects.map((o) => (
            <option key={o.name} value={o.name}>
              {o.name} ({o.geometries} geometries)
            </option>
          ))}
        </select>
      </Field>
      <Field label="Region code property" hint="Only properties present and unique on every region are offered first.">
        <select className={inputClass} value={idProperty} onChange={(e) => setIdProperty(e.target.value)} aria-label="Region code property">
          {idCandidates.map((p) => (
            <option key={p} value={p}>
              {p}
            </option>
          ))}
        </select>
      </Field>
      <Field label="Region name property (optional)">
        <select className={inputClass} value={nameProperty} onChange={(e) => setNameProperty(e.target.value)} aria-label="Region name property">
          <option value="">none</option>
          {object?.properties.map((p) => (
            <option key={p.name} value={p.name}>
              {p.name} (e.g. {p.examples.slice(0, 2).join(", ")})
            </option>
          ))}
        </select>
      </Field>
      {create.error ? <Notice tone="error">{create.error.message}</Notice> : null}
      <div className="flex gap-2">
        <button type="submit" className={primaryButton} disabled={create.isPending || !idProperty}>
          {create.isPending ? "Starting…" : "Validate boundaries"}
        </button>
        <button type="button" className={secondaryButton} onClick={onCancel}>
          Start over
        </button>
      </div>
      <MismatchDialog
        match={confirming}
        what="region"
        onConfirm={() => {
          setConfirming(null);
          submit();
        }}
        onCancel={() => setConfirming(null)}
      />
    </form>
  );
}

/** Says why the set (or panel) choice is what it is: a match by codes, or a new one because nothing matched. */
function TargetNote({ suggestion, chosen, what, kind }: { suggestion: TargetSuggestion | null; chosen: string; what: "region" | "indicator"; kind: "boundary set" | "panel" }) {
  if (!suggestion || suggestion.candidates.length === 0) return null;
  const chosenMatch = suggestion.candidates.find((c) => String(c.id) === chosen);
  let text: string;
  if (chosenMatch && !chosenMatch.matches) text = `${mismatchWarning(chosenMatch, what)} You will be asked to confirm.`;
  else if (chosenMatch) text = `${chosenMatch.matched} of the file's ${chosenMatch.total} ${what} codes are ${what} codes of '${chosenMatch.name}'${chosenMatch.version === null ? "" : ` v${chosenMatch.version}`}.`;
  else if (suggestion.choice === "version" && suggestion.target) text = `The file matches '${suggestion.target.name}'; you chose a new ${kind} instead.`;
  else text = `The file's ${what} codes match no existing ${kind}, so it starts a new one.`;
  return (
    <p className="mt-1 text-xs text-ink-500" data-testid="target-note">
      {text} <span className="text-ink-400">{suggestion.rule}</span>
    </p>
  );
}

function MismatchDialog({ match, what, onConfirm, onCancel }: { match: CandidateMatch | null; what: "region" | "indicator"; onConfirm: () => void; onCancel: () => void }) {
  return (
    <ConfirmDialog
      open={match !== null}
      title={match ? `Make this a new version of '${match.name}'?` : "Confirm"}
      confirmLabel="Yes, a new version"
      cancelLabel="Go back"
      onConfirm={onConfirm}
      onCancel={onCancel}
      testId="mismatch-dialog"
    >
      {match ? (
        <>
          <p>{mismatchWarning(match, what)}</p>
          <p>A new version replaces the {what === "region" ? "map" : "panel"} everyone uses once it is published. If this file is about different {what === "region" ? "regions" : "indicators"}, go back and start a new one.</p>
        </>
      ) : null}
    </ConfirmDialog>
  );
}

function PanelForm({ slug, uploadId, boundarySets, panels, onCancel }: { slug: string; uploadId: string; boundarySets: BoundarySetView[]; panels: PanelView[]; onCancel: () => void }) {
  const preview = useQuery(previewQuery(slug, uploadId));
  if (preview.isPending) return <p className="text-sm text-ink-500">Reading the header…</p>;
  if (preview.error) return <Notice tone="error">{preview.error.message}</Notice>;
  if (preview.data.kind !== "panel") return <Notice tone="error">This upload is not a panel.</Notice>;
  return <PanelFormFields slug={slug} uploadId={uploadId} preview={preview.data.preview} boundarySets={boundarySets} panels={panels} onCancel={onCancel} />;
}

type LayoutChoice = ColumnMapping["layout"];

/** The period columns a steward can tick in a wide-by-period file: every header but the region's that names a period. */
function periodCandidates(header: readonly string[], region: string) {
  return header.flatMap((column) => {
    if (column === region) return [];
    const found = headerPeriod(column);
    return found ? [{ column, indicator: found.indicator, period: found.period }] : [];
  });
}

function PanelFormFields({
  slug,
  uploadId,
  preview,
  boundarySets,
  panels,
  onCancel,
}: {
  slug: string;
  uploadId: string;
  preview: PanelUploadPreview;
  boundarySets: BoundarySetView[];
  panels: PanelView[];
  onCancel: () => void;
}) {
  const header = preview.header;
  const initial: ColumnMapping | null = preview.remembered?.mapping ?? preview.suggestion.mapping;
  const target = preview.target;
  const [panelId, setPanelId] = useState<string>(target.choice === "version" && target.target ? String(target.target.id) : "new");
  const [panelName, setPanelName] = useState("");
  const [boundarySetId, setBoundarySetId] = useState<string>(boundarySets[0] ? String(boundarySets[0].id) : "");
  const [decimal, setDecimal] = useState<"." | ",">(preview.delimiter.delimiter === ";" ? "," : ".");
  // Without a complete suggestion, a header with period columns still opens on the layout it looks like.
  const detected: LayoutChoice = initial?.layout ?? (periodCandidates(header, "").length > 0 && !header.some((h) => /^(period|year|time|date|quarter|month)$/i.test(h)) ? "wide-period" : "long");
  const [layout, setLayout] = useState<LayoutChoice>(detected);
  const pick = (wanted: string | undefined, fallbackIndex: number) => (wanted && header.includes(wanted) ? wanted : (header[fallbackIndex] ?? ""));
  const [region, setRegion] = useState(pick(initial?.region, 0));
  const [period, setPeriod] = useState(pick(initial && "period" in initial ? initial.period : undefined, 1));
  const [indicator, setIndicator] = useState(pick(initial?.layout === "long" ? initial.indicator : undefined, 2));
  const [value, setValue] = useState(pick(initial?.layout === "long" ? initial.value : undefined, 3));
  const [indicators, setIndicators] = useState<string[]>(initial?.layout === "wide" ? initial.indicators : header.slice(2));
  const rememberedBare = initial?.layout === "wide-period" ? initial.columns.find((c) => headerPeriod(c.column)?.indicator === null)?.indicator : undefined;
  const [periodIndicator, setPeriodIndicator] = useState(rememberedBare ?? preview.periodIndicator);
  const candidates = periodCandidates(header, region);
  const [periodColumns, setPeriodColumns] = useState<string[]>(initial?.layout === "wide-period" ? initial.columns.map((c) => c.column) : candidates.map((c) => c.column));
  const [confirming, setConfirming] = useState<CandidateMatch | null>(null);
  const create = useCreateVersion(slug, "panel");

  const chosenPeriodColumns = candidates.filter((c) => periodColumns.includes(c.column));
  const needsIndicatorName = chosenPeriodColumns.some((c) => c.indicator === null);
  const mapping: ColumnMapping =
    layout === "long"
      ? { layout, region, period, indicator, value }
      : layout === "wide"
        ? { layout, region, period, indicators: indicators.filter((c) => c !== region && c !== period) }
        : { layout, region, columns: chosenPeriodColumns.map((c) => ({ column: c.column, indicator: c.indicator ?? periodIndicator.trim(), period: c.period })) };
  const chosenMatch = target.candidates.find((c) => String(c.id) === panelId) ?? null;
  const submit = () =>
    create.mutate({
      uploadId,
      ...(panelId === "new" ? { panelName, boundarySetId: Number(boundarySetId) } : { panelId: Number(panelId) }),
      decimal,
      mapping,
      remember: true,
    });
  const columnSelect = (label: string, current: string, set: (v: string) => void) => (
    <Field label={label}>
      <select className={inputClass} value={current} onChange={(e) => set(e.target.value)} aria-label={`${label} column`}>
        {header.map((h) => (
          <option key={h} value={h}>
            {h}
          </option>
        ))}
      </select>
    </Field>
  );

  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        if (chosenMatch && !chosenMatch.matches) setConfirming(chosenMatch);
        else submit();
      }}
    >
      <p className="text-xs text-ink-500">
        {preview.delimiter.reason}
        {preview.bom ? " The file starts with a byte-order mark (ignored)." : ""}
        {preview.encodingProblem ? ` ${preview.encodingProblem}.` : ""}
      </p>
      {preview.rates.length ? (
        <p className="text-xs text-ink-500" data-testid="preview-rates">
          The file declares {preview.rates.length === 1 ? "a rate" : `${preview.rates.length} rates`} above its header:{" "}
          {preview.rates.map((r) => `${r.indicator} = ${r.events} / ${r.population} × ${r.multiplier.toLocaleString("en")}`).join("; ")}. Validation checks
          their counts by region and period and derives a rate the file does not give.
        </p>
      ) : null}
      {preview.remembered ? (
        <Notice>This header was mapped before in this workspace; that mapping is filled in.</Notice>
      ) : preview.suggestion.notes.length ? (
        <Notice>{preview.suggestion.notes.join("; ")}</Notice>
      ) : null}
      <Field label="Panel">
        <select className={inputClass} value={panelId} onChange={(e) => setPanelId(e.target.value)} aria-label="Panel" data-testid="panel-choice">
          <option value="new">A new panel…</option>
          {panels.map((p) => (
            <option key={p.id} value={p.id}>
              New version of {p.name}
            </option>
          ))}
        </select>
        {panelId === "new" ? (
          <div className="mt-2 space-y-2">
            <input className={inputClass} placeholder="Panel name" aria-label="Panel name" value={panelName} onChange={(e) => setPanelName(e.target.value)} required />
            <select className={inputClass} value={boundarySetId} onChange={(e) => setBoundarySetId(e.target.value)} aria-label="Boundary set" required>
              {boundarySets.length === 0 ? <option value="">Upload boundaries first</option> : null}
              {boundarySets.map((s) => (
                <option key={s.id} value={s.id}>
                  Regions from {s.name}
                </option>
              ))}
            </select>
          </div>
        ) : null}
        <TargetNote suggestion={target} chosen={panelId} what="indicator" kind="panel" />
      </Field>
      <div className="grid grid-cols-2 gap-3">
        <Field label="Layout">
          <select className={inputClass} value={layout} onChange={(e) => setLayout(e.target.value === "wide" ? "wide" : e.target.value === "wide-period" ? "wide-period" : "long")} aria-label="Layout">
            <option value="long">Long: region, period, indicator, value</option>
            <option value="wide">Wide: one column per indicator</option>
            <option value="wide-period">Wide by period: periods in the column headers</option>
          </select>
        </Field>
        <Field label="Decimal separator">
          <select className={inputClass} value={decimal} onChange={(e) => setDecimal(e.target.value === "," ? "," : ".")} aria-label="Decimal separator">
            <option value=".">Point (12.5)</option>
            <option value=",">Comma (12,5)</option>
          </select>
        </Field>
      </div>
      <div className="grid grid-cols-2 gap-3">
        {columnSelect("Region", region, setRegion)}
        {layout !== "wide-period" ? columnSelect("Period", period, setPeriod) : null}
        {layout === "long" ? columnSelect("Indicator", indicator, setIndicator) : null}
        {layout === "long" ? columnSelect("Value", value, setValue) : null}
      </div>
      {layout === "wide" ? (
        <fieldset>
          <legend className={labelClass}>Indicator columns</legend>
          <div className="mt-1 flex flex-wrap gap-x-4 gap-y-1 text-sm">
            {header
              .filter((h) => h !== region && h !== period)
              .map((h) => (
                <label key={h} className="flex items-center gap-1.5">
                  <input type="checkbox" checked={indicators.includes(h)} onChange={(e) => setIndicators((list) => (e.target.checked ? [...list, h] : list.filter((x) => x !== h)))} />
                  {h}
                </label>
              ))}
          </div>
        </fieldset>
      ) : null}
      {layout === "wide-period" ? (
        <fieldset data-testid="period-columns">
          <legend className={labelClass}>Period columns</legend>
          {candidates.length === 0 ? (
            <p className="mt-1 text-sm text-red-700">No column header names a period (such as income_2019 or 2019); choose another layout.</p>
          ) : (
            <table className="mt-1 text-sm">
              <thead>
                <tr className="text-left text-xs uppercase text-ink-400">
                  <th className="py-1 pr-4 font-medium">Read</th>
                  <th className="py-1 pr-4 font-medium">Column</th>
                  <th className="py-1 pr-4 font-medium">Indicator</th>
                  <th className="py-1 font-medium">Period</th>
                </tr>
              </thead>
              <tbody>
                {candidates.map((c) => (
                  <tr key={c.column}>
                    <td className="py-0.5 pr-4">
                      <input
                        type="checkbox"
                        aria-label={`Read column ${c.column}`}
                        checked={periodColumns.includes(c.column)}
                        onChange={(e) => setPeriodColumns((list) => (e.target.checked ? [...list, c.column] : list.filter((x) => x !== c.column)))}
                      />
                    </td>
                    <td className="py-0.5 pr-4 font-mono text-xs">{c.column}</td>
                    <td className="py-0.5 pr-4">{c.indicator ?? <span className="text-ink-400">{periodIndicator.trim() || "(name it below)"}</span>}</td>
                    <td className="py-0.5">{c.period}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          {needsIndicatorName ? (
            <div className="mt-2">
              <label className={labelClass} htmlFor="period-indicator">
                Indicator code of the columns that name only a period
              </label>
              <input
                id="period-indicator"
                className={`${inputClass} mt-1`}
                value={periodIndicator}
                onChange={(e) => setPeriodIndicator(e.target.value)}
                required
                maxLength={120}
              />
              <p className="mt-1 text-xs text-ink-400">Proposed from the file name; use the code the indicator has in your other panels.</p>
            </div>
          ) : null}
        </fieldset>
      ) : null}
      {preview.sampleRows.length ? (
        <div className="overflow-x-auto">
          <table className="min-w-full text-xs">
            <caption className="pb-1 text-left text-ink-400">First rows of the file</caption>
            <thead>
              <tr>
                {header.map((h) => (
                  <th key={h} className="border-b border-ink-100 px-2 py-1 text-left font-medium text-ink-600">
                    {h}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {preview.sampleRows.map((row, i) => (
                <tr key={i}>
                  {row.map((cell, j) => (
                    <td key={j} className="px-2 py-0.5 text-ink-500">
                      {cell}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
      {create.error ? <Notice tone="error">{create.error.message}</Notice> : null}
      <div className="flex gap-2">
        <button type="submit" className={primaryButton} disabled={create.isPending || (layout === "wide-period" && chosenPeriodColumns.length === 0)}>
          {create.isPending ? "Starting…" : "Validate panel"}
        </button>
        <button type="button" className={secondaryButton} onClick={onCancel}>
          Start over
        </button>
      </div>
      <MismatchDialog
        match={confirming}
        what="indicator"
        onConfirm={() => {
          setConfirming(null);
          submit();
        }}
        onCancel={() => setConfirming(null)}
      />
    </form>
  );
}

function Field({ label, hint, children }: { label: string; hint?: string; children: React.ReactNode }) {
  return (
    <div>
      <span className={labelClass}>{label}</span>
      <div className="mt-1">{children}</div>
      {hint ? <p className="mt-1 text-xs text-ink-400">{hint}</p> : null}
    </div>
  );
}

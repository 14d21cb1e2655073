"use client";

import { useRouter } from "next/navigation";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useRef, useState } from "react";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import type { BoundaryUploadPreview, PanelUploadPreview, UploadTicket } from "@/lib/intake/actions";
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
        {error ? <Notice tone="error">{error}</Notice> : null}
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
  const [setId, setSetId] = useState<string>(boundarySets[0] ? String(boundarySets[0].id) : "new");
  const [setName, setSetName] = useState("");
  const [objectName, setObjectName] = useState(objects[0]?.name ?? "");
  const object = objects.find((o) => o.name === objectName);
  const idCandidates = object?.candidateIdProperties.length ? object.candidateIdProperties : (object?.properties.map((p) => p.name) ?? []);
  const [idProperty, setIdProperty] = useState(idCandidates[0] ?? "");
  const [nameProperty, setNameProperty] = useState(object?.properties.find((p) => /name/i.test(p.name))?.name ?? "");
  const create = useCreateVersion(slug, "boundaries");
  if (!preview.summary) return <Notice tone="error">{preview.problem ?? "The file could not be read as TopoJSON or GeoJSON."}</Notice>;
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        create.mutate({
          uploadId,
          ...(setId === "new" ? { setName } : { boundarySetId: Number(setId) }),
          objectName,
          idProperty,
          nameProperty: nameProperty || null,
        });
      }}
    >
      <p className="text-xs text-ink-500">
        {preview.summary.sourceFormat === "geojson" ? "GeoJSON: it will be converted to TopoJSON so neighbours share borders exactly. " : "TopoJSON. "}
        Coordinates look {preview.summary.coordinates === "planar" ? "projected (planar)" : "like longitude/latitude"}.
      </p>
      <Field label="Boundary set">
        <select className={inputClass} value={setId} onChange={(e) => setSetId(e.target.value)}>
          {boundarySets.map((s) => (
            <option key={s.id} value={s.id}>
              {s.name} (new version)
            </option>
          ))}
          <option value="new">A new boundary set…</option>
        </select>
        {setId === "new" ? <input className={`${inputClass} mt-2`} placeholder="Name, e.g. Districts 2024" value={setName} onChange={(e) => setSetName(e.target.value)} required /> : null}
      </Field>
      <Field label="Object holding the regions">
        <select className={inputClass} value={objectName} onChange={(e) => setObjectName(e.target.value)}>
          {objects.map((o) => (
            <option key={o.name} value={o.name}>
              {o.name} ({o.geometries} geometries)
            </option>
          ))}
        </select>
      </Field>
      <Field label="Region code property" hint="Only properties present and unique on every region are offered first.">
        <select className={inputClass} value={idProperty} onChange={(e) => setIdProperty(e.target.value)}>
          {idCandidates.map((p) => (
            <option key={p} value={p}>
              {p}
            </option>
          ))}
        </select>
      </Field>
      <Field label="Region name property (optional)">
        <select className={inputClass} value={nameProperty} onChange={(e) => setNameProperty(e.target.value)}>
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
    </form>
  );
}

function PanelForm({ slug, uploadId, boundarySets, panels, onCancel }: { slug: string; uploadId: string; boundarySets: BoundarySetView[]; panels: PanelView[]; onCancel: () => void }) {
  const preview = useQuery(previewQuery(slug, uploadId));
  if (preview.isPending) return <p className="text-sm text-ink-500">Reading the header…</p>;
  if (preview.error) return <Notice tone="error">{preview.error.message}</Notice>;
  if (preview.data.kind !== "panel") return <Notice tone="error">This upload is not a panel.</Notice>;
  return <PanelFormFields slug={slug} uploadId={uploadId} preview={preview.data.preview} boundarySets={boundarySets} panels={panels} onCancel={onCancel} />;
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
  const [panelId, setPanelId] = useState<string>(panels[0] ? String(panels[0].id) : "new");
  const [panelName, setPanelName] = useState("");
  const [boundarySetId, setBoundarySetId] = useState<string>(boundarySets[0] ? String(boundarySets[0].id) : "");
  const [decimal, setDecimal] = useState<"." | ",">(preview.delimiter.delimiter === ";" ? "," : ".");
  const [layout, setLayout] = useState<"long" | "wide">(initial?.layout ?? "long");
  const pick = (wanted: string | undefined, fallbackIndex: number) => (wanted && header.includes(wanted) ? wanted : (header[fallbackIndex] ?? ""));
  const [region, setRegion] = useState(pick(initial?.region, 0));
  const [period, setPeriod] = useState(pick(initial?.period, 1));
  const [indicator, setIndicator] = useState(pick(initial?.layout === "long" ? initial.indicator : undefined, 2));
  const [value, setValue] = useState(pick(initial?.layout === "long" ? initial.value : undefined, 3));
  const [indicators, setIndicators] = useState<string[]>(initial?.layout === "wide" ? initial.indicators : header.slice(2));
  const create = useCreateVersion(slug, "panel");

  const mapping: ColumnMapping = layout === "long" ? { layout, region, period, indicator, value } : { layout, region, period, indicators: indicators.filter((c) => c !== region && c !== period) };
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
        create.mutate({
          uploadId,
          ...(panelId === "new" ? { panelName, boundarySetId: Number(boundarySetId) } : { panelId: Number(panelId) }),
          decimal,
          mapping,
          remember: true,
        });
      }}
    >
      <p className="text-xs text-ink-500">
        {preview.delimiter.reason}
        {preview.bom ? " The file starts with a byte-order mark (ignored)." : ""}
        {preview.encodingProblem ? ` ${preview.encodingProblem}.` : ""}
      </p>
      {preview.remembered ? (
        <Notice>This header was mapped before in this workspace; that mapping is filled in.</Notice>
      ) : preview.suggestion.notes.length ? (
        <Notice>{preview.suggestion.notes.join(" ")}</Notice>
      ) : null}
      <Field label="Panel">
        <select className={inputClass} value={panelId} onChange={(e) => setPanelId(e.target.value)} aria-label="Panel">
          {panels.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name} (new version)
            </option>
          ))}
          <option value="new">A new panel…</option>
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
      </Field>
      <div className="grid grid-cols-2 gap-3">
        <Field label="Layout">
          <select className={inputClass} value={layout} onChange={(e) => setLayout(e.target.value === "wide" ? "wide" : "long")} aria-label="Layout">
            <option value="long">Long: region, period, indicator, value</option>
            <option value="wide">Wide: one column per indicator</option>
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
        {columnSelect("Period", period, setPeriod)}
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
        <button type="submit" className={primaryButton} disabled={create.isPending}>
          {create.isPending ? "Starting…" : "Validate panel"}
        </button>
        <button type="button" className={secondaryButton} onClick={onCancel}>
          Start over
        </button>
      </div>
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

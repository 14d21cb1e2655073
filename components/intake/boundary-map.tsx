"use client";

import { useQuery } from "@tanstack/react-query";
import { geoIdentity, geoMercator, geoPath, type GeoProjection, type GeoStreamWrapper } from "d3-geo";
import type { Feature, FeatureCollection, Geometry, GeoJsonProperties } from "geojson";
import { useMemo, useState } from "react";
import { feature } from "topojson-client";
import { inputClass, labelClass } from "@/components/ui/button-styles";
import { FigureTable } from "@/components/ui/figure-table";
import type { WeightsPreview } from "@/lib/geometry/weights-preview";
import { NO_NEIGHBOURS_HATCH } from "@/lib/runs/cluster-classes";
import { Notice, Panel } from "./format";
import { topologyQuery, weightsQuery, type TopologyResponse } from "./query-options";

const WIDTH = 720;
const HEIGHT = 560;
const INK = "#1e2a44";
const OCHRE = "#c98a1b";

type RuleKind = "queen" | "rook" | "knn" | "band";

function ruleText(kind: RuleKind, k: number, band: string): string {
  if (kind === "knn") return `knn:${k}`;
  if (kind === "band") return band.trim() === "" ? "band" : `band:${band.trim()}`;
  return kind;
}

const RULE_CAPTION: Record<RuleKind, string> = {
  rook: "Rook: two regions are neighbours when they share a stretch of border.",
  queen: "Queen: two regions are neighbours when they share at least one border point.",
  knn: "k nearest: each region is linked to the k regions with the closest centroids (a link may be one-way).",
  band: "Distance band: regions whose centroids lie within the band are neighbours; empty means the smallest band that gives every region a neighbour.",
};

/** The regions drawn with d3-geo, neighbour links for a chosen weights rule, a histogram of neighbour counts, islands hatched. */
export function BoundaryMap({ slug, versionId }: { slug: string; versionId: number }) {
  const [kind, setKind] = useState<RuleKind>("queen");
  const [k, setK] = useState(6);
  const [band, setBand] = useState("");
  const rule = ruleText(kind, k, band);
  const topology = useQuery(topologyQuery(slug, versionId));
  const weights = useQuery(weightsQuery(slug, versionId, rule));

  return (
    <Panel
      title="Regions and neighbours"
      caption="The regions of this boundary version and who counts as whose neighbour under a weights rule. Regions with no neighbour under the rule are hatched grey; analyses must choose what to do with them."
    >
      <div className="mb-4 flex flex-wrap items-end gap-4">
        <label className={labelClass}>
          Weights rule
          <select className={`${inputClass} mt-1`} value={kind} onChange={(e) => setKind(e.target.value as RuleKind)} data-testid="weights-rule">
            <option value="queen">Queen contiguity</option>
            <option value="rook">Rook contiguity</option>
            <option value="knn">k nearest neighbours</option>
            <option value="band">Distance band</option>
          </select>
        </label>
        {kind === "knn" ? (
          <label className={labelClass}>
            k
            <input className={`${inputClass} mt-1 w-24`} type="number" min={1} max={99} value={k} onChange={(e) => setK(Math.max(1, Math.min(99, Number(e.target.value) || 1)))} />
          </label>
        ) : null}
        {kind === "band" ? (
          <label className={labelClass}>
            Band (km or map units; empty = smallest connecting)
            <input className={`${inputClass} mt-1 w-40`} inputMode="decimal" value={band} onChange={(e) => setBand(e.target.value.replace(/[^\d.]/g, ""))} placeholder="auto" />
          </label>
        ) : null}
      </div>
      {topology.error ? <Notice tone="error">{topology.error.message}</Notice> : null}
      {weights.error ? <Notice tone="error">{weights.error.message}</Notice> : null}
      {topology.data ? (
        <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_260px]">
          <RegionsSvg topology={topology.data} weights={weights.data ?? null} />
          <div className="space-y-4">
            {weights.data ? <WeightsFacts weights={weights.data} /> : <p className="text-sm text-ink-500">Computing neighbours…</p>}
            {weights.data ? <NeighbourHistogram weights={weights.data} /> : null}
            <p className="text-xs text-ink-500">{RULE_CAPTION[kind]}</p>
          </div>
        </div>
      ) : (
        <p className="text-sm text-ink-500">Loading the boundaries…</p>
      )}
    </Panel>
  );
}

function RegionsSvg({ topology, weights }: { topology: TopologyResponse; weights: WeightsPreview | null }) {
  const drawn = useMemo(() => {
    const object = topology.topology.objects[topology.objectName];
    const collection = feature(topology.topology, object) as FeatureCollection<Geometry, GeoJsonProperties> | Feature<Geometry, GeoJsonProperties>;
    const features = collection.type === "FeatureCollection" ? collection.features : [collection];
    const fc: FeatureCollection = { type: "FeatureCollection", features };
    // Planar coordinates (e.g. kilometres) are drawn as they are, north up; longitude/latitude through Mercator.
    const projection: GeoProjection | GeoStreamWrapper =
      topology.coordinates === "planar" ? geoIdentity().reflectY(true).fitSize([WIDTH, HEIGHT], fc) : geoMercator().fitSize([WIDTH, HEIGHT], fc);
    const path = geoPath(projection);
    // Works for both projection kinds: a point through the same stream as the shapes.
    const project = (x: number, y: number): [number, number] | null => {
      const [px, py] = path.centroid({ type: "Point", coordinates: [x, y] });
      return Number.isFinite(px) && Number.isFinite(py) ? [px, py] : null;
    };
    return {
      shapes: features.map((f) => ({ code: String(f.properties?.[topology.idProperty] ?? ""), d: path(f) ?? "" })),
      project,
    };
  }, [topology]);

  const islands = new Set(weights?.islands ?? []);
  const points = weights ? weights.centroids.map(([x, y]) => drawn.project(x, y)) : [];
  return (
    <figure>
      <figcaption className="mb-1 text-sm font-medium text-ink">Regions{weights ? ` with ${weights.rule} links between centroids` : ""}</figcaption>
      <svg viewBox={`0 0 ${WIDTH} ${HEIGHT}`} className="h-auto w-full rounded-md border border-ink-100 bg-ink-50/40" role="img" aria-label="Map of the regions and their neighbour links" data-testid="boundary-map">
        <defs>
          <pattern id="tessera-island-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
            <rect width="6" height="6" fill={NO_NEIGHBOURS_HATCH.background} />
            <line x1="0" y1="0" x2="0" y2="6" stroke={NO_NEIGHBOURS_HATCH.stroke} strokeWidth="2" />
          </pattern>
        </defs>
        <g>
          {drawn.shapes.map((s) => (
            <path key={s.code} d={s.d} fill={islands.has(s.code) ? "url(#tessera-island-hatch)" : "#ffffff"} stroke={INK} strokeOpacity={0.45} strokeWidth={0.6} data-island={islands.has(s.code) ? "true" : undefined}>
              <title>
                {s.code}
                {topology.regionNames[s.code] ? ` · ${topology.regionNames[s.code]}` : ""}
                {islands.has(s.code) ? " · no neighbours" : ""}
              </title>
            </path>
          ))}
        </g>
        {weights ? (
          <g stroke={OCHRE} strokeOpacity={0.8} strokeWidth={0.9}>
            {weights.links.map(([i, j]) => {
              const a = points[i];
              const b = points[j];
              return a && b ? <line key={`${i}-${j}`} x1={a[0]} y1={a[1]} x2={b[0]} y2={b[1]} /> : null;
            })}
          </g>
        ) : null}
        {weights ? (
          <g fill={INK}>
            {points.map((p, i) => (p ? <circle key={i} cx={p[0]} cy={p[1]} r={1.6} /> : null))}
          </g>
        ) : null}
      </svg>
      {weights ? <NeighbourTable weights={weights} names={topology.regionNames} /> : null}
      <p className="mt-1 text-xs text-ink-500">
        Lines join the centroids of neighbouring regions (ochre); hatched grey regions have no neighbour under this rule.
        {topology.coordinates === "planar" ? " Planar coordinates drawn as given, north up." : " Longitude/latitude drawn in Mercator."}
      </p>
    </figure>
  );
}

function WeightsFacts({ weights }: { weights: WeightsPreview }) {
  return (
    <dl className="grid grid-cols-2 gap-2 text-sm" data-testid="weights-facts">
      <dt className="text-ink-500">Regions</dt>
      <dd className="text-right tabular-nums">{weights.n}</dd>
      <dt className="text-ink-500">Links</dt>
      <dd className="text-right tabular-nums">{weights.links.length}</dd>
      <dt className="text-ink-500">Mean neighbours</dt>
      <dd className="text-right tabular-nums">{weights.meanNeighbours.toFixed(2)}</dd>
      <dt className="text-ink-500">Connected groups</dt>
      <dd className="text-right tabular-nums">{weights.components}</dd>
      {weights.band !== null ? (
        <>
          <dt className="text-ink-500">Band used</dt>
          <dd className="text-right tabular-nums">{weights.band.toFixed(1)}</dd>
        </>
      ) : null}
      <dt className="text-ink-500">No neighbours</dt>
      <dd className="text-right tabular-nums" data-testid="island-count">
        {weights.islands.length}
      </dd>
      {weights.islands.length ? <dd className="col-span-2 text-xs text-ink-600">{weights.islands.join(", ")}</dd> : null}
    </dl>
  );
}

function NeighbourHistogram({ weights }: { weights: WeightsPreview }) {
  const width = 260;
  const height = 170;
  const margin = { top: 8, right: 8, bottom: 34, left: 34 };
  const maxK = Math.max(0, ...weights.histogram.map((h) => h.neighbours));
  const counts = Array.from({ length: maxK + 1 }, (_, k) => weights.histogram.find((h) => h.neighbours === k)?.regions ?? 0);
  const maxCount = Math.max(1, ...counts);
  const innerW = width - margin.left - margin.right;
  const innerH = height - margin.top - margin.bottom;
  const barW = innerW / counts.length;
  return (
    <figure>
      <figcaption className="text-sm font-medium text-ink">Neighbours per region</figcaption>
      <svg viewBox={`0 0 ${width} ${height}`} className="h-auto w-full" role="img" aria-label="Histogram of neighbour counts" data-testid="neighbour-histogram">
        <g transform={`translate(${margin.left},${margin.top})`}>
          {counts.map((c, k) => {
            const h = (c / maxCount) * innerH;
            return (
              <rect key={k} x={k * barW + 1} y={innerH - h} width={Math.max(1, barW - 2)} height={h} fill={k === 0 ? "url(#tessera-island-hatch)" : INK} stroke={k === 0 ? "#a8a29e" : "none"}>
                <title>{`${c} region${c === 1 ? "" : "s"} with ${k} neighbour${k === 1 ? "" : "s"}`}</title>
              </rect>
            );
          })}
          <line x1={0} y1={innerH} x2={innerW} y2={innerH} stroke={INK} strokeOpacity={0.4} />
          {counts.map((_, k) =>
            counts.length <= 16 || k % Math.ceil(counts.length / 16) === 0 ? (
              <text key={k} x={k * barW + barW / 2} y={innerH + 12} fontSize={9} textAnchor="middle" fill={INK}>
                {k}
              </text>
            ) : null,
          )}
          <text x={-4} y={4} fontSize={9} textAnchor="end" fill={INK}>
            {maxCount}
          </text>
          <text x={-4} y={innerH} fontSize={9} textAnchor="end" fill={INK}>
            0
          </text>
          <text x={innerW / 2} y={innerH + 28} fontSize={10} textAnchor="middle" fill={INK}>
            Number of neighbours
          </text>
          <text transform={`translate(${-24},${innerH / 2}) rotate(-90)`} fontSize={10} textAnchor="middle" fill={INK}>
            Regions
          </text>
        </g>
      </svg>
      <p className="text-xs text-ink-500">Bar height: regions with that many neighbours; the hatched bar at 0 counts regions with none.</p>
      <FigureTable
        summary={`${weights.n} regions with ${weights.meanNeighbours.toFixed(2)} neighbours on average under ${weights.rule}; ${weights.islands.length} without any.`}
        caption="Neighbours per region"
        columns={[
          { key: "k", label: "Neighbours" },
          { key: "regions", label: "Regions", numeric: true },
        ]}
        rows={counts.map((c, k) => ({ k, regions: c }))}
        testId="neighbour-histogram"
      />
    </figure>
  );
}

/** The neighbour map as a table: each region with its neighbours under the rule. */
function NeighbourTable({ weights, names }: { weights: WeightsPreview; names: Record<string, string | null | undefined> }) {
  const neighbours = weights.ids.map(() => [] as string[]);
  for (const [i, j] of weights.links) {
    neighbours[i].push(weights.ids[j]);
    neighbours[j].push(weights.ids[i]);
  }
  const rows = weights.ids
    .map((id, i) => ({ region: names[id] ? `${names[id]} (${id})` : id, count: neighbours[i].length, neighbours: neighbours[i].join(", ") || "none" }))
    .sort((a, b) => a.region.localeCompare(b.region, "en", { numeric: true }));
  return (
    <FigureTable
      summary={`${weights.n} regions and ${weights.links.length} neighbour links under ${weights.rule}; ${weights.components} connected group${weights.components === 1 ? "" : "s"}.`}
      caption={`Regions and their neighbours under ${weights.rule}`}
      columns={[
        { key: "region", label: "Region" },
        { key: "count", label: "Neighbours", numeric: true },
        { key: "neighbours", label: "Neighbour codes" },
      ]}
      rows={rows}
      testId="boundary-map"
    />
  );
}

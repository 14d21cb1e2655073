"use client";

import { geoIdentity, geoMercator, geoPath } from "d3-geo";
import { useId, useMemo, useRef, useState } from "react";
import { feature } from "topojson-client";
import type { Feature, FeatureCollection, Geometry } from "geojson";
import type { GeometryCollection, Topology } from "topojson-specification";
import type { MapGeometry } from "@/lib/runs/on-demand";
import { NO_NEIGHBOURS_HATCH } from "@/lib/runs/cluster-classes";
import type { ClassPattern } from "@/lib/runs/class-patterns";
import { ClassPatternDefs, patternFill } from "./class-pattern";

export type RegionFeature = Feature<Geometry, Record<string, unknown>> & { regionId: string };

/** GeoJSON features of the run's boundaries, each with its region id. */
export function useRegionFeatures(geometry: MapGeometry | undefined): RegionFeature[] {
  return useMemo(() => {
    if (!geometry) return [];
    const topology = geometry.topology as Topology;
    const object = topology.objects[geometry.objectName] as GeometryCollection<Record<string, unknown>>;
    const fc = feature(topology, object) as FeatureCollection<Geometry, Record<string, unknown>>;
    return fc.features.map((f) => ({ ...f, regionId: String(f.properties?.[geometry.idProperty] ?? "") }));
  }, [geometry]);
}

const WIDTH = 460;
const HEIGHT = 420;

/** Regions in reading order (rows of centroids top to bottom, then left to right): the order arrow keys follow. */
function readingOrder<T extends { centroid: [number, number] }>(items: T[]): T[] {
  const band = HEIGHT / 16;
  return [...items].sort((p, q) => Math.floor(p.centroid[1] / band) - Math.floor(q.centroid[1] / band) || p.centroid[0] - q.centroid[0]);
}

/**
 * An SVG map of the regions: `fill(id)` colours each region, `hatched(id)`
 * draws the no-neighbours hatch. Hover and click report the region id;
 * `activeId` is outlined (shared across maps and the scatter plot). Optional
 * `regionClass(id)` puts the region's class on the path (`data-class`) and
 * `regionTitle(id)` gives it a title, so a class is never told by colour alone;
 * with `patterns`, each class's pattern is drawn over its colour too.
 *
 * Keyboard: the map is a group of region buttons with one tab stop; arrow keys
 * move between regions in reading order (Home, End: first, last), Enter or Space
 * picks the focused region like a click, and the focused region is outlined.
 */
export function RegionMap({
  features,
  coordinates,
  fill,
  hatched,
  activeId,
  onHover,
  onSelect,
  label,
  testId,
  regionClass,
  regionTitle,
  regionValue,
  patterns,
}: {
  features: RegionFeature[];
  coordinates: "planar" | "lonlat";
  fill: (id: string) => string;
  hatched?: (id: string) => boolean;
  activeId: string | null;
  onHover: (id: string | null) => void;
  onSelect: (id: string) => void;
  label: string;
  testId?: string;
  regionClass?: (id: string) => string;
  regionTitle?: (id: string) => string;
  /** The value the fill shows, put on the path as `data-value` (tests and assistive tools read it). */
  regionValue?: (id: string) => string | undefined;
  /** Patterns per class (keys as `regionClass` answers): drawn over the fills so classes differ without colour. */
  patterns?: Readonly<Record<string, ClassPattern>>;
}) {
  const uid = useId().replace(/[^A-Za-z0-9_-]/g, "");
  const hatchId = `tessera-hatch-${uid}`;
  const patternPrefix = `class-${uid}`;
  const svgRef = useRef<SVGSVGElement>(null);
  const [focusId, setFocusId] = useState<string | null>(null);
  const [tabId, setTabId] = useState<string | null>(null);
  const paths = useMemo(() => {
    const fc: FeatureCollection = { type: "FeatureCollection", features };
    const projection = coordinates === "planar" ? geoIdentity().reflectY(true).fitSize([WIDTH, HEIGHT], fc) : geoMercator().fitSize([WIDTH, HEIGHT], fc);
    const path = geoPath(projection);
    return readingOrder(features.map((f) => ({ id: f.regionId, d: path(f) ?? "", centroid: path.centroid(f) as [number, number] })));
  }, [features, coordinates]);
  const active = paths.find((p) => p.id === activeId);
  const focused = paths.find((p) => p.id === focusId);
  const tabStop = paths.some((p) => p.id === tabId) ? tabId : (active?.id ?? paths[0]?.id ?? null);

  function focusRegion(index: number) {
    const p = paths[Math.max(0, Math.min(paths.length - 1, index))];
    if (!p) return;
    setTabId(p.id);
    svgRef.current?.querySelector<SVGPathElement>(`path[data-region="${CSS.escape(p.id)}"]`)?.focus();
  }

  function onKeyDown(e: React.KeyboardEvent<SVGSVGElement>) {
    const index = paths.findIndex((p) => p.id === focusId);
    if (index < 0) return;
    if (e.key === "ArrowRight" || e.key === "ArrowDown") focusRegion(index + 1);
    else if (e.key === "ArrowLeft" || e.key === "ArrowUp") focusRegion(index - 1);
    else if (e.key === "Home") focusRegion(0);
    else if (e.key === "End") focusRegion(paths.length - 1);
    else if (e.key === "Enter" || e.key === " ") onSelect(paths[index].id);
    else return;
    e.preventDefault();
  }

  return (
    <svg
      ref={svgRef}
      viewBox={`0 0 ${WIDTH} ${HEIGHT}`}
      role="group"
      aria-label={label}
      aria-roledescription="map"
      className="h-auto w-full"
      data-testid={testId}
      onMouseLeave={() => onHover(null)}
      onKeyDown={onKeyDown}
    >
      <defs>
        <pattern id={hatchId} width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <rect width="6" height="6" fill={NO_NEIGHBOURS_HATCH.background} />
          <line x1="0" y1="0" x2="0" y2="6" stroke={NO_NEIGHBOURS_HATCH.stroke} strokeWidth="2" />
        </pattern>
        {patterns ? <ClassPatternDefs prefix={patternPrefix} patterns={patterns} /> : null}
      </defs>
      {paths.map((p) => (
        <path
          key={p.id}
          d={p.d}
          fill={hatched?.(p.id) ? `url(#${hatchId})` : fill(p.id)}
          stroke="#ffffff"
          strokeWidth={0.6}
          data-region={p.id}
          data-class={regionClass?.(p.id)}
          data-value={regionValue?.(p.id)}
          role="button"
          tabIndex={p.id === tabStop ? 0 : -1}
          aria-label={regionTitle ? regionTitle(p.id) : p.id}
          aria-pressed={p.id === activeId}
          onMouseEnter={() => onHover(p.id)}
          onClick={() => onSelect(p.id)}
          onFocus={() => {
            setFocusId(p.id);
            setTabId(p.id);
            onHover(p.id);
          }}
          onBlur={() => setFocusId((current) => (current === p.id ? null : current))}
          className="cursor-pointer outline-none"
        >
          {regionTitle ? <title>{regionTitle(p.id)}</title> : null}
        </path>
      ))}
      {patterns && regionClass ? (
        <g aria-hidden="true" pointerEvents="none">
          {paths.map((p) => {
            const cls = regionClass(p.id);
            return cls && Object.hasOwn(patterns, cls) && patterns[cls].mark !== "none" && !hatched?.(p.id) ? (
              <path key={p.id} d={p.d} fill={patternFill(patternPrefix, cls)} stroke="#ffffff" strokeWidth={0.6} />
            ) : null;
          })}
        </g>
      ) : null}
      {active ? <path d={active.d} fill="none" stroke="#1e2a44" strokeWidth={2.2} pointerEvents="none" aria-hidden="true" /> : null}
      {focused ? <path d={focused.d} fill="none" stroke="#865214" strokeWidth={3} strokeDasharray="4 2" pointerEvents="none" aria-hidden="true" data-testid={testId ? `${testId}-focus` : undefined} /> : null}
    </svg>
  );
}

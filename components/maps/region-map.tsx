"use client";

import { geoIdentity, geoMercator, geoPath } from "d3-geo";
import { useMemo } from "react";
import { feature } from "topojson-client";
import type { Feature, FeatureCollection, Geometry } from "geojson";
import type { GeometryCollection, Topology } from "topojson-specification";
import type { MapGeometry } from "@/lib/runs/on-demand";
import { NO_NEIGHBOURS_HATCH } from "@/lib/runs/cluster-classes";

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

/**
 * An SVG map of the regions: `fill(id)` colours each region, `hatched(id)`
 * draws the no-neighbours hatch. Hover and click report the region id;
 * `activeId` is outlined (shared across maps and the scatter plot). Optional
 * `regionClass(id)` puts the region's class on the path (`data-class`) and
 * `regionTitle(id)` gives it a title, so a class is never told by colour alone.
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
}) {
  const paths = useMemo(() => {
    const fc: FeatureCollection = { type: "FeatureCollection", features };
    const projection = coordinates === "planar" ? geoIdentity().reflectY(true).fitSize([WIDTH, HEIGHT], fc) : geoMercator().fitSize([WIDTH, HEIGHT], fc);
    const path = geoPath(projection);
    return features.map((f) => ({ id: f.regionId, d: path(f) ?? "" }));
  }, [features, coordinates]);
  const active = paths.find((p) => p.id === activeId);
  return (
    <svg viewBox={`0 0 ${WIDTH} ${HEIGHT}`} role="img" aria-label={label} className="h-auto w-full" data-testid={testId} onMouseLeave={() => onHover(null)}>
      <defs>
        <pattern id="tessera-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
          <rect width="6" height="6" fill={NO_NEIGHBOURS_HATCH.background} />
          <line x1="0" y1="0" x2="0" y2="6" stroke={NO_NEIGHBOURS_HATCH.stroke} strokeWidth="2" />
        </pattern>
      </defs>
      {paths.map((p) => (
        <path
          key={p.id}
          d={p.d}
          fill={hatched?.(p.id) ? "url(#tessera-hatch)" : fill(p.id)}
          stroke="#ffffff"
          strokeWidth={0.6}
          data-region={p.id}
          data-class={regionClass?.(p.id)}
          data-value={regionValue?.(p.id)}
          onMouseEnter={() => onHover(p.id)}
          onClick={() => onSelect(p.id)}
          className="cursor-pointer"
        >
          {regionTitle ? <title>{regionTitle(p.id)}</title> : null}
        </path>
      ))}
      {active ? <path d={active.d} fill="none" stroke="#1e2a44" strokeWidth={2.2} pointerEvents="none" /> : null}
    </svg>
  );
}

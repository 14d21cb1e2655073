"use client";

import type { ReactNode } from "react";
import { SegmentedSwitch } from "@/components/ui/segmented-switch";
import { fmt, fmtP, Notice, Panel } from "@/components/runs/format";
import { LocalInferenceNote } from "@/components/runs/reachability-note";
import {
  GI_STAR_CLASS_COLOURS,
  GI_STAR_CLASS_NAMES,
  GI_STAR_CLASS_ORDER,
  giStarLegendSentence,
  giStarMapLabel,
  giStarMapTitle,
  giStarMissingNote,
  LOCAL_MAP_VIEW_NAMES,
  type LocalMapView,
} from "@/lib/runs/gi-star-classes";
import type { MapPeriod } from "@/lib/runs/on-demand";
import type { ReachabilityWarning } from "@/lib/runs/reachability";
import { CORRECTION_LABELS } from "@/lib/runs/schemas";
import type { GiStarClass } from "@/lib/runs/types";
import { RegionMap, type RegionFeature } from "./region-map";
import { GI_STAR_CLASS_PATTERNS } from "@/lib/runs/class-patterns";
import { PatternSwatch } from "./class-pattern";
import { GiStarMapAlternative } from "./figure-alternatives";

const VIEWS: readonly LocalMapView[] = ["clusters", "gi-star"];

/** The switch between the local Moran cluster maps and the Gi* maps. */
export function LocalMapViewSwitch({ value, onChange }: { value: LocalMapView; onChange: (view: LocalMapView) => void }) {
  return <SegmentedSwitch options={VIEWS} names={LOCAL_MAP_VIEW_NAMES} value={value} onChange={onChange} label="Local map" testId="local-map-view" tone="ink" />;
}

/** A region's stored Gi*: its z, p and class (null when the period stored no Gi* or the region is not in it). */
export function giStarOf(m: MapPeriod, id: string): { z: number | null; pseudoP: number | null; cls: GiStarClass } | null {
  const g = m.giStar;
  if (!g) return null;
  const i = g.ids.indexOf(id);
  return i < 0 ? null : { z: g.z[i], pseudoP: g.pseudoP[i], cls: g.classes[i] };
}

function giStarCaption(m: MapPeriod): string {
  const g = m.giStar;
  if (!g) return "";
  const tests = g.ids.length - g.counts["no-neighbours"];
  const correction = g.correction === "none" ? "no correction" : `${CORRECTION_LABELS[g.correction]} correction`;
  return (
    `Local Getis–Ord Gi*: for each region, the sum of the values of the region and its neighbours, as a z-score against what the same weights would give anywhere ` +
    `on the map (z > 0: higher than expected, z < 0: lower). Classes use the two-sided conditional permutation pseudo p (the same draws as the cluster map) ` +
    `with ${correction} across the ${tests} regions with neighbours, at α = ${g.alpha}. ${giStarLegendSentence()} (hatched).`
  );
}

/** One period's Gi* map with its legend, caption and the notes on its inference. */
export function GiStarPanel({
  map,
  indicator,
  features,
  coordinates,
  names,
  activeId,
  onHover,
  onSelect,
  warning,
  testId,
  actions,
}: {
  map: MapPeriod;
  indicator: string;
  features: RegionFeature[];
  coordinates: "planar" | "lonlat";
  names: Record<string, string | null>;
  activeId: string | null;
  onHover: (id: string | null) => void;
  onSelect: (id: string) => void;
  warning: ReachabilityWarning | null;
  testId: string;
  /** The panel's header actions (the map's figure downloads). */
  actions?: ReactNode;
}) {
  const g = map.giStar;
  if (!g) {
    return (
      <Panel title={giStarMapTitle(map.period)}>
        <div data-testid={`gi-star-missing-${testId}`}>
          <Notice>{map.local ? giStarMissingNote(true) : (map.note ?? giStarMissingNote(false))}</Notice>
        </div>
      </Panel>
    );
  }
  const classOf = (id: string): GiStarClass | null => giStarOf(map, id)?.cls ?? null;
  return (
    <Panel title={giStarMapTitle(map.period)} actions={actions} caption={<span data-testid={`gi-star-caption-${testId}`}>{giStarCaption(map)}</span>}>
      <RegionMap
        features={features}
        coordinates={coordinates}
        fill={(id) => GI_STAR_CLASS_COLOURS[classOf(id) ?? "not-significant"]}
        hatched={(id) => {
          const c = classOf(id);
          return c === "no-neighbours" || c === null;
        }}
        regionClass={(id) => classOf(id) ?? "no-value"}
        regionTitle={(id) => {
          const r = giStarOf(map, id);
          const name = names[id] ? `${names[id]} (${id})` : id;
          return r ? `${name}: ${GI_STAR_CLASS_NAMES[r.cls]}, Gi* z = ${fmt(r.z)}, p = ${fmtP(r.pseudoP)}` : `${name}: no value`;
        }}
        activeId={activeId}
        onHover={onHover}
        onSelect={onSelect}
        patterns={GI_STAR_CLASS_PATTERNS}
        label={giStarMapLabel(indicator, map.period)}
        testId={`gi-star-map-${testId}`}
      />
      <ul className="mt-3 flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-600" data-testid={`gi-star-legend-${testId}`}>
        {GI_STAR_CLASS_ORDER.map((c) => (
          <li key={c} className="flex items-center gap-1.5" data-class={c}>
            <PatternSwatch pattern={GI_STAR_CLASS_PATTERNS[c]} id={`gi-star-${c}`} />
            {GI_STAR_CLASS_NAMES[c]} <span className="tabular-nums text-ink-400">{g.counts[c]}</span>
          </li>
        ))}
      </ul>
      <GiStarMapAlternative map={map} indicator={indicator} names={names} unit="" testId={`gi-star-map-${testId}`} />
      <LocalInferenceNote warning={warning} local={map.local} testId={`gi-star-${testId}`} />
    </Panel>
  );
}

/** Rows of the region detail table: the region's Gi* z and class in both periods. */
export function GiStarDetailRows({ id, a, b }: { id: string; a: MapPeriod; b: MapPeriod }) {
  const ra = giStarOf(a, id);
  const rb = giStarOf(b, id);
  return (
    <>
      <tr data-testid="region-detail-gi-star-class">
        <td className="py-1.5 text-ink-500">Gi* class</td>
        <td className="py-1.5 text-right">{ra ? GI_STAR_CLASS_NAMES[ra.cls] : "—"}</td>
        <td className="py-1.5 text-right">{rb ? GI_STAR_CLASS_NAMES[rb.cls] : "—"}</td>
      </tr>
      <tr data-testid="region-detail-gi-star-z">
        <td className="py-1.5 text-ink-500">Gi* z</td>
        <td className="py-1.5 text-right tabular-nums">{fmt(ra?.z ?? null)}</td>
        <td className="py-1.5 text-right tabular-nums">{fmt(rb?.z ?? null)}</td>
      </tr>
    </>
  );
}

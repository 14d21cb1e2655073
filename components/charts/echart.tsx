"use client";

import ReactECharts from "echarts-for-react";
import type { EChartsOption } from "echarts";

// One wrapper so every chart shares the font, colours and no animation
// (screenshots and printed reports show the final state).
export const INK = "#1e2a44";
export const OCHRE = "#c98a1b";
export const MUTED = "#94a1bd";
/** The boundary-reform mark on timelines (ink-500) and the shading of carried periods (ink-50). */
export const REFORM_MARK = "#45557b";
export const REFORM_SHADE = "rgba(195,203,219,0.22)";

export function EChart({
  option,
  height = 320,
  onClick,
  testId,
  label,
}: {
  option: EChartsOption;
  height?: number;
  onClick?: (params: { name?: string; dataIndex?: number; seriesName?: string; data?: unknown }) => void;
  testId?: string;
  /** The chart's accessible name (its words and numbers are in the FigureTable beside it). */
  label?: string;
}) {
  return (
    <div data-testid={testId} role={label ? "img" : undefined} aria-label={label}>
      <ReactECharts
        option={{ animation: false, textStyle: { fontFamily: "var(--font-tessera), system-ui, sans-serif", color: INK }, ...option }}
        style={{ height, width: "100%" }}
        notMerge
        onEvents={onClick ? { click: onClick } : undefined}
        opts={{ renderer: "svg" }}
      />
    </div>
  );
}

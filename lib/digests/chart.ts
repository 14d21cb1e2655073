/**
 * A small chart of one indicator's Moran's I over the periods of the current
 * results, rendered on the server by ECharts' SSR renderer to an SVG string
 * (no DOM, no canvas). Used inline in the digest's HTML part.
 */
import * as echarts from "echarts";
import type { SignificanceClass } from "@/lib/runs/types";

export const DIGEST_INK = "#1e2a44";
export const DIGEST_OCHRE = "#c98a1b";

export interface ChartPoint {
  readonly period: string;
  readonly I: number | null;
  readonly expectedI: number | null;
  readonly significance: SignificanceClass | null;
}

const WIDTH = 520;
const HEIGHT = 200;

/** SVG markup (starts with "<svg") of I by period, E[I] dashed, significant periods in ochre. */
export function renderIndicatorChart(title: string, points: readonly ChartPoint[]): string {
  const chart = echarts.init(null, null, { renderer: "svg", ssr: true, width: WIDTH, height: HEIGHT });
  try {
    chart.setOption({
      animation: false,
      backgroundColor: "#ffffff",
      textStyle: { fontFamily: "Helvetica, Arial, sans-serif", color: DIGEST_INK },
      title: { text: title, left: 8, top: 4, textStyle: { fontSize: 13, color: DIGEST_INK, fontWeight: "bold" } },
      grid: { left: 56, right: 16, top: 36, bottom: 40 },
      xAxis: {
        type: "category",
        name: "Period",
        nameLocation: "middle",
        nameGap: 24,
        data: points.map((p) => p.period),
        axisLine: { lineStyle: { color: DIGEST_INK } },
        axisLabel: { color: DIGEST_INK, fontSize: 10 },
      },
      yAxis: {
        type: "value",
        name: "Moran's I (unitless)",
        nameLocation: "middle",
        nameGap: 40,
        scale: true,
        axisLine: { show: true, lineStyle: { color: DIGEST_INK } },
        axisLabel: { color: DIGEST_INK, fontSize: 10 },
        splitLine: { lineStyle: { color: "#e7e5e4" } },
      },
      series: [
        {
          name: "Moran's I",
          type: "line",
          data: points.map((p) => ({
            value: p.I,
            itemStyle: { color: p.significance === "clustering" || p.significance === "dispersion" ? DIGEST_OCHRE : DIGEST_INK },
          })),
          symbolSize: 6,
          lineStyle: { color: DIGEST_INK, width: 2 },
          connectNulls: false,
        },
        {
          name: "E[I] under no clustering",
          type: "line",
          data: points.map((p) => p.expectedI),
          symbol: "none",
          lineStyle: { color: "#78716c", type: "dashed", width: 1 },
        },
      ],
    });
    return chart.renderToSVGString();
  } finally {
    chart.dispose();
  }
}

/** The caption printed under every digest chart. */
export const CHART_CAPTION = "Solid line: Moran's I per period (ochre points are significant after the run's correction). Dashed line: E[I], its expected value with no spatial clustering.";

/**
 * The chart's SVG with ids and class names that do not depend on the process
 * that drew it. ECharts names them after a per-process instance counter and
 * a global class counter ("zr16-cls-64"), so the web app's preview and the
 * worker's mail of one digest differed in those names alone. Renamed to
 * `<prefix>-…` in order of first appearance; one prefix per chart keeps two
 * charts in one mail apart.
 */
export function stableSvgIds(svg: string, prefix: string): string {
  const classes = new Map<string, string>();
  return svg
    .replace(/zr\d+-cls-\d+/g, (name) => {
      let renamed = classes.get(name);
      if (!renamed) {
        renamed = `${prefix}-cls-${classes.size}`;
        classes.set(name, renamed);
      }
      return renamed;
    })
    .replace(/zr\d+-/g, `${prefix}-`);
}

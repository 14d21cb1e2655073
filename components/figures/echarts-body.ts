import * as echarts from "echarts";
import type { EChartsOption } from "echarts";
import { FIGURE_FONT, type FigureBody } from "@/lib/runs/figures";

/**
 * A chart's body for a downloaded figure: the same option drawn by ECharts' SVG renderer on a
 * server-side-rendering instance of a fixed size, so the file does not depend on the window's
 * width or on what the pointer hovers. The figure draws its own legend, so the chart's is hidden;
 * text uses the system font stack.
 */
export function echartsFigureBody(option: EChartsOption, width: number, height: number): FigureBody {
  const chart = echarts.init(null, null, { renderer: "svg", ssr: true, width, height });
  try {
    chart.setOption({
      ...option,
      animation: false,
      textStyle: { fontFamily: FIGURE_FONT, color: "#1e2a44" },
      legend: { ...(option.legend && !Array.isArray(option.legend) ? option.legend : {}), show: false },
      tooltip: { show: false },
    });
    return { svg: chart.renderToSVGString(), width, height };
  } finally {
    chart.dispose();
  }
}

/**
 * Downloadable figures (docs/exports.md, "Figures"): a chart or map of a run composed into one
 * standalone SVG with its title, units, legend, a source line (panel version, run, weights) and
 * the cautions that apply, so the file still says what it shows once it leaves Tessera. Pure:
 * screens hand in the body (the chart's or map's own SVG) and the words; the browser rasterises
 * the result for PNG (components/figures/figure-downloads.tsx).
 */
import { escapeHtml } from "@/lib/security/html";
import { cautionLine, type CautionKey } from "./cautions";
import { controlForLabel, EB_LABEL, isEmpiricalBayesRun, runName, weightsLabel, type RunLabelInput } from "./label";

/** The system font stack of every figure: nothing is downloaded to draw it. */
export const FIGURE_FONT = "system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif";

const INK = "#1e2a44";
const MUTED = "#45557b";
const CAUTION = "#865214";
const HATCH = { background: "#e7e5e4", stroke: "#a8a29e" };

/** One entry of a figure's legend. */
export type FigureLegendItem =
  /** A filled square: a class of a map or of the scatter plot's points. */
  | { kind: "swatch"; label: string; colour: string }
  /** The grey hatch of regions without neighbours or without a value. */
  | { kind: "hatch"; label: string }
  /** A line of a chart: solid, dashed or dotted. */
  | { kind: "line"; label: string; colour: string; dash?: "dashed" | "dotted" }
  /** A point of a chart. */
  | { kind: "point"; label: string; colour: string }
  /** A sequential colour scale from `low` to `high` (labels already formatted, with units). */
  | { kind: "scale"; label: string; stops: readonly string[]; low: string; high: string };

/** The chart or map itself: a complete `<svg>` element and the size it is drawn at. */
export interface FigureBody {
  svg: string;
  width: number;
  height: number;
}

export interface FigureInput {
  title: string;
  /** What the values are measured in ("Moran's I (unitless)", "per cent of the labour force"); empty leaves the line out. */
  units: string;
  legend: readonly FigureLegendItem[];
  /** figureSourceLine(…): panel version, run, weights. */
  sourceLine: string;
  /** figureCautions(…): one line each. */
  cautions: readonly string[];
  body: FigureBody;
}

const PAD = 24;
const MIN_WIDTH = 640;
const TITLE_SIZE = 18;
const TEXT_SIZE = 12;
const SMALL_SIZE = 11;

/** XML text: escaped, and without the control characters XML 1.0 cannot hold at all. */
export function xmlText(value: string): string {
  return escapeHtml(value.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, ""));
}

/** Lines of at most about `width` pixels of text at `size` (an average glyph is taken as 0.56 em; long words are cut). */
export function wrapText(text: string, width: number, size: number): string[] {
  const max = Math.max(8, Math.floor(width / (size * 0.56)));
  const lines: string[] = [];
  let line = "";
  for (const raw of text.split(/\s+/).filter(Boolean)) {
    let word = raw;
    while (word.length > max) {
      if (line) {
        lines.push(line);
        line = "";
      }
      lines.push(word.slice(0, max));
      word = word.slice(max);
    }
    if (!line) line = word;
    else if (line.length + 1 + word.length <= max) line += ` ${word}`;
    else {
      lines.push(line);
      line = word;
    }
  }
  if (line) lines.push(line);
  return lines;
}

function textWidth(text: string, size: number): number {
  return text.length * size * 0.56;
}

/** The root element of the body, with the size it is placed at (any XML declaration or doctype dropped). */
function placedBody(body: FigureBody, x: number, y: number): string {
  const svg = body.svg.replace(/^\s*(<\?xml[^>]*\?>\s*)?(<!DOCTYPE[^>]*>\s*)?/i, "");
  const open = /^<svg\b([^>]*)>/.exec(svg);
  if (!open) throw new Error("The figure's body must be an <svg> element.");
  const attributes = open[1].replace(/\s(x|y|width|height)\s*=\s*("[^"]*"|'[^']*')/g, "").replace(/\/$/, "");
  const selfClosing = open[1].trimEnd().endsWith("/");
  const viewBox = /\sviewBox\s*=/.test(attributes) ? "" : ` viewBox="0 0 ${body.width} ${body.height}"`;
  return `<svg x="${x}" y="${y}" width="${body.width}" height="${body.height}"${viewBox}${attributes}${selfClosing ? "/>" : ">"}${svg.slice(open[0].length)}`;
}

/** The legend's items laid out in rows; returns the markup and its height. */
function legendMarkup(items: readonly FigureLegendItem[], x0: number, y0: number, width: number): { markup: string; height: number } {
  const parts: string[] = [];
  const rowHeight = 22;
  let x = x0;
  let y = y0;
  let used = false;
  for (const item of items) {
    const labelWidth = textWidth(item.label, TEXT_SIZE);
    const itemWidth = item.kind === "scale" ? Math.min(width, 160 + textWidth(item.low, SMALL_SIZE) + textWidth(item.high, SMALL_SIZE) + labelWidth + 24) : 26 + labelWidth + 18;
    if (used && x + itemWidth > x0 + width) {
      x = x0;
      y += rowHeight;
    }
    used = true;
    const mid = y + 8;
    const label = (lx: number) => `<text x="${lx}" y="${mid + 4}" font-size="${TEXT_SIZE}" fill="${INK}">${xmlText(item.label)}</text>`;
    switch (item.kind) {
      case "swatch":
        parts.push(`<g class="legend-item"><rect x="${x}" y="${y + 2}" width="12" height="12" rx="2" fill="${xmlText(item.colour)}" stroke="rgba(0,0,0,0.15)"/>${label(x + 18)}</g>`);
        break;
      case "hatch":
        parts.push(`<g class="legend-item"><rect x="${x}" y="${y + 2}" width="12" height="12" rx="2" fill="url(#figure-hatch)" stroke="rgba(0,0,0,0.15)"/>${label(x + 18)}</g>`);
        break;
      case "line": {
        const dash = item.dash === "dashed" ? ' stroke-dasharray="5 3"' : item.dash === "dotted" ? ' stroke-dasharray="1.5 2.5"' : "";
        parts.push(`<g class="legend-item"><line x1="${x}" y1="${mid}" x2="${x + 20}" y2="${mid}" stroke="${xmlText(item.colour)}" stroke-width="2.5"${dash}/>${label(x + 26)}</g>`);
        break;
      }
      case "point":
        parts.push(`<g class="legend-item"><circle cx="${x + 6}" cy="${mid}" r="5" fill="${xmlText(item.colour)}"/>${label(x + 18)}</g>`);
        break;
      case "scale": {
        const id = `figure-scale-${parts.length}`;
        const stops = item.stops.map((c, i) => `<stop offset="${item.stops.length > 1 ? (i / (item.stops.length - 1)).toFixed(3) : "0"}" stop-color="${xmlText(c)}"/>`).join("");
        const lowWidth = textWidth(item.low, SMALL_SIZE);
        const barX = x + textWidth(item.label, TEXT_SIZE) + 10;
        parts.push(
          `<g class="legend-item"><defs><linearGradient id="${id}" x1="0" x2="1" y1="0" y2="0">${stops}</linearGradient></defs>${label(x)}` +
            `<text x="${barX}" y="${mid + 4}" font-size="${SMALL_SIZE}" fill="${MUTED}">${xmlText(item.low)}</text>` +
            `<rect x="${barX + lowWidth + 6}" y="${y + 3}" width="140" height="10" rx="2" fill="url(#${id})"/>` +
            `<text x="${barX + lowWidth + 152}" y="${mid + 4}" font-size="${SMALL_SIZE}" fill="${MUTED}">${xmlText(item.high)}</text></g>`,
        );
        break;
      }
    }
    x += itemWidth;
  }
  return { markup: parts.join(""), height: items.length ? y - y0 + rowHeight : 0 };
}

function textBlock(lines: readonly string[], x: number, y: number, size: number, colour: string, attributes = ""): string {
  return lines.map((line, i) => `<text x="${x}" y="${y + size + i * Math.round(size * 1.4)}" font-size="${size}" fill="${colour}"${attributes}>${xmlText(line)}</text>`).join("");
}

function blockHeight(lines: readonly string[], size: number): number {
  return lines.length ? size + (lines.length - 1) * Math.round(size * 1.4) + Math.round(size * 0.4) : 0;
}

/**
 * One standalone SVG document: title, units, the body, its legend, the source line and the
 * cautions, on a white ground, in the system font stack. Every text is XML-escaped; the body is
 * placed as given (it must be an `<svg>` element; its own size attributes are replaced).
 *
 * composeFigure({ title: "Moran's I of unemployment per period", units: "Moran's I (unitless)",
 *   legend: [{ kind: "line", label: "Moran's I", colour: "#1e2a44" }], sourceLine, cautions,
 *   body: { svg: "<svg …>…</svg>", width: 800, height: 340 } }) → "<?xml …?><svg …>…</svg>"
 */
export function composeFigure(input: FigureInput): string {
  const width = Math.max(MIN_WIDTH, Math.ceil(input.body.width) + 2 * PAD);
  const inner = width - 2 * PAD;
  const parts: string[] = [];
  let y = PAD;

  const title = wrapText(input.title, inner, TITLE_SIZE);
  parts.push(`<g class="figure-title">${textBlock(title, PAD, y, TITLE_SIZE, INK, ' font-weight="600"')}</g>`);
  y += blockHeight(title, TITLE_SIZE) + 4;
  if (input.units.trim()) {
    const units = wrapText(`Units: ${input.units}`, inner, TEXT_SIZE);
    parts.push(`<g class="figure-units">${textBlock(units, PAD, y, TEXT_SIZE, MUTED)}</g>`);
    y += blockHeight(units, TEXT_SIZE);
  }
  y += 10;

  const bodyX = PAD + Math.max(0, Math.floor((inner - input.body.width) / 2));
  parts.push(`<g class="figure-body">${placedBody(input.body, bodyX, y)}</g>`);
  y += Math.ceil(input.body.height) + 12;

  const legend = legendMarkup(input.legend, PAD, y, inner);
  if (legend.height) {
    parts.push(`<g class="figure-legend">${legend.markup}</g>`);
    y += legend.height + 8;
  }

  parts.push(`<line x1="${PAD}" y1="${y}" x2="${width - PAD}" y2="${y}" stroke="#dfe4ed" stroke-width="1"/>`);
  y += 6;
  const source = wrapText(input.sourceLine, inner, SMALL_SIZE);
  parts.push(`<g class="figure-source">${textBlock(source, PAD, y, SMALL_SIZE, MUTED)}</g>`);
  y += blockHeight(source, SMALL_SIZE) + 6;
  for (const caution of input.cautions) {
    const lines = wrapText(`Caution: ${caution}`, inner, SMALL_SIZE);
    parts.push(`<g class="figure-caution">${textBlock(lines, PAD, y, SMALL_SIZE, CAUTION)}</g>`);
    y += blockHeight(lines, SMALL_SIZE) + 4;
  }
  const height = Math.ceil(y + PAD - 4);

  return (
    `<?xml version="1.0" encoding="UTF-8"?>\n` +
    `<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" ` +
    `font-family="${xmlText(FIGURE_FONT)}" role="img" aria-label="${xmlText(input.title)}">` +
    `<title>${xmlText(input.title)}</title>` +
    `<defs><pattern id="figure-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">` +
    `<rect width="6" height="6" fill="${HATCH.background}"/><line x1="0" y1="0" x2="0" y2="6" stroke="${HATCH.stroke}" stroke-width="2"/></pattern></defs>` +
    `<rect width="100%" height="100%" fill="#ffffff"/>` +
    parts.join("") +
    `</svg>\n`
  );
}

/** The size a composed figure is drawn at (its root's width and height), for rasterising it. */
export function figureSize(svg: string): { width: number; height: number } {
  const root = /<svg\b[^>]*?\swidth="(\d+)"\s+height="(\d+)"/.exec(svg);
  if (!root) throw new Error("Not a composed figure: its root <svg> has no width and height.");
  return { width: Number(root[1]), height: Number(root[2]) };
}

/** What a source line needs of a run (RunSummary has all of it). */
export interface FigureSourceRun extends RunLabelInput {
  /** The global run id (URLs, exports). */
  readonly id: number;
}

const counts = new Intl.NumberFormat("en-GB");

/**
 * "Source: Veldmark regional panel v1 · Run 3 (id 12) · weights queen, row-standardised · 999 permutations · Tessera":
 * where the figure's numbers come from, with the periods shown and the export date when given.
 */
export function figureSourceLine(run: FigureSourceRun, options: { periods?: readonly string[]; date?: string } = {}): string {
  return [
    `Source: ${run.panelName} v${run.panelVersion}`,
    `${runName(run.number)} (id ${run.id})`,
    `weights ${weightsLabel(run.params.weights, run.params.transform)}`,
    `${counts.format(run.params.permutations)} permutations`,
    ...(isEmpiricalBayesRun(run.params) ? [EB_LABEL] : []),
    ...(run.params.controlFor?.length ? [controlForLabel(run.params.controlFor)] : []),
    ...(options.periods?.length ? [options.periods.length === 1 ? `period ${options.periods[0]}` : `periods ${options.periods.join(", ")}`] : []),
    ...(options.date ? [`exported ${options.date}`] : []),
    "Tessera",
  ].join(" · ");
}

/**
 * "Source: crosswalk 4 (derived from the overlap of areas) from Veldmark districts v1 to Veldmark districts v2 · Tessera":
 * the source line of the reform map, which shows boundary versions rather than a run's results.
 */
export function crosswalkSourceLine(crosswalk: {
  id: number;
  origin: "derived" | "uploaded";
  fileName: string | null;
  from: { setName: string; version: number };
  to: { setName: string; version: number };
}, options: { date?: string } = {}): string {
  const how = crosswalk.origin === "derived" ? "derived from the overlap of areas" : `uploaded as ${crosswalk.fileName ?? "a CSV"}`;
  return [
    `Source: crosswalk ${crosswalk.id} (${how}) from ${crosswalk.from.setName} v${crosswalk.from.version} to ${crosswalk.to.setName} v${crosswalk.to.version}`,
    ...(options.date ? [`exported ${options.date}`] : []),
    "Tessera",
  ].join(" · ");
}

/** The kinds of figure Tessera offers for download. */
export type FigureKind = "timeline" | "z-chart" | "robustness" | "cluster-map" | "gi-star-map" | "choropleth" | "rate-map" | "scatter" | "reform-map";

/** Below this many regions analytical p-values are unreliable (the "small n" caution). */
export const SMALL_N = 30;

/**
 * The cautions that apply to one figure, in the order of the cautions box:
 * every result: significance is not causation (not on a plain choropleth or the reform map), units and weights;
 * many tests at once: timelines (many periods) and local maps (many regions);
 * few regions: when the smallest n shown is below SMALL_N;
 * rates: rate maps, and any figure of a rate indicator;
 * covariates: the least-squares assumptions when a residual line is shown;
 * a harmonised panel, or the reform map unless `harmonised` is false (an uploaded crosswalk): the areal-weighting caution.
 */
export function figureCautionKeys(kind: FigureKind, context: { regions?: number | null; rate?: boolean; covariates?: boolean; harmonised?: boolean } = {}): CautionKey[] {
  const keys: CautionKey[] = [];
  const inferential = kind !== "choropleth" && kind !== "rate-map" && kind !== "reform-map";
  if (inferential) keys.push("causation");
  if (kind !== "reform-map") keys.push("maup");
  if (kind === "timeline" || kind === "z-chart" || kind === "cluster-map" || kind === "gi-star-map" || kind === "scatter") keys.push("multiple");
  if (inferential && context.regions !== null && context.regions !== undefined && context.regions < SMALL_N) keys.push("small-n");
  if (kind === "rate-map" || context.rate) keys.push("small-rates");
  if (context.covariates && kind === "timeline") keys.push("ols-assumptions");
  if (kind === "reform-map" ? context.harmonised !== false : context.harmonised) keys.push("areal-weighting");
  return keys;
}

/** The caution lines of a figure ("Title. Body" each), from the same texts as the cautions box. */
export function figureCautions(kind: FigureKind, context: Parameters<typeof figureCautionKeys>[1] = {}): string[] {
  return figureCautionKeys(kind, context).map(cautionLine);
}

/** A piece of a file name: ASCII letters, digits and hyphens only, at most `max` characters. */
export function fileNamePart(value: string, max = 48): string {
  const ascii = value
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "");
  return ascii.slice(0, max).replace(/-+$/g, "");
}

/**
 * "tessera-run-12-unemployment-rate-2013-cluster-map.svg": safe on every file system (ASCII
 * letters, digits, hyphens; never empty, never a path), naming the run id, indicator, period(s) and figure
 * (a figure of no run, the reform map, passes `runId: null` and names its crosswalk as the indicator).
 */
export function figureFileName(input: { runId: number | null; indicator: string; periods?: readonly string[]; figure: FigureKind | string; extension: "svg" | "png" }): string {
  const parts = [
    "tessera",
    input.runId !== null && Number.isSafeInteger(input.runId) && input.runId > 0 ? `run-${input.runId}` : "",
    fileNamePart(input.indicator),
    ...(input.periods ?? []).map((p) => fileNamePart(p, 24)),
    fileNamePart(input.figure, 32),
  ].filter(Boolean);
  return `${parts.join("-")}.${input.extension}`;
}

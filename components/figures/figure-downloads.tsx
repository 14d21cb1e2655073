"use client";

import { useRef, useState } from "react";
import { composeFigure, figureFileName, figureSize, type FigureBody, type FigureInput, type FigureKind } from "@/lib/runs/figures";

/** What a figure says besides its body (lib/runs/figures.ts composeFigure) and how its files are named. */
export type FigureSpec = Omit<FigureInput, "body"> & {
  file: { runId: number | null; indicator: string; periods?: readonly string[]; figure: FigureKind };
};

/** Pixels per figure unit of the PNG: twice the SVG's size, sharp on print and high-density screens. */
const PNG_SCALE = 2;

function save(blob: Blob, name: string) {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = name;
  link.rel = "noopener";
  document.body.append(link);
  link.click();
  link.remove();
  // The download has taken the blob by the next tick; the URL is not needed after.
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}

/** The composed SVG drawn on a canvas at twice its size, as a PNG (an SVG with no foreignObject leaves the canvas readable). */
async function rasterise(svg: string): Promise<Blob> {
  const { width, height } = figureSize(svg);
  const url = URL.createObjectURL(new Blob([svg], { type: "image/svg+xml" }));
  try {
    const image = new Image();
    await new Promise<void>((resolve, reject) => {
      image.onload = () => resolve();
      image.onerror = () => reject(new Error("The browser could not draw the figure."));
      image.src = url;
    });
    const canvas = document.createElement("canvas");
    canvas.width = width * PNG_SCALE;
    canvas.height = height * PNG_SCALE;
    const context = canvas.getContext("2d");
    if (!context) throw new Error("This browser offers no canvas to draw the figure on.");
    context.fillStyle = "#ffffff";
    context.fillRect(0, 0, canvas.width, canvas.height);
    context.drawImage(image, 0, 0, canvas.width, canvas.height);
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error("The browser could not encode the PNG."))), "image/png"));
  } finally {
    URL.revokeObjectURL(url);
  }
}

/**
 * The body of a map figure: the map's own `<svg role="img">` in the same panel as the buttons,
 * serialised and drawn `width` wide (the hover outline left out).
 */
export function panelMapBody(group: HTMLElement, width = 600): FigureBody {
  // Region maps are keyboard groups of regions (role="group", roledescription "map"); other maps are images.
  const svg = group.closest("section")?.querySelector<SVGSVGElement>('svg[aria-roledescription="map"], svg[role="img"]');
  if (!svg) throw new Error("The map is not drawn yet.");
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.querySelectorAll('[pointer-events="none"]').forEach((e) => e.remove());
  copy.removeAttribute("class");
  copy.removeAttribute("data-testid");
  // The file is a picture: no keyboard stops or focus outline from the page.
  copy.querySelectorAll("[tabindex]").forEach((e) => e.removeAttribute("tabindex"));
  copy.removeAttribute("tabindex");
  copy.setAttribute("xmlns", "http://www.w3.org/2000/svg");
  const [, , w, h] = (copy.getAttribute("viewBox") ?? "0 0 460 420").split(/\s+/).map(Number);
  const height = Math.round((width * h) / w);
  return { svg: new XMLSerializer().serializeToString(copy), width, height };
}

/**
 * The "Download figure" group of a chart or map: SVG and PNG of the figure composed with its
 * title, units, legend, source line and cautions (docs/exports.md, "Figures"). Hidden in print.
 */
export function FigureDownloads({ spec, body, testId }: { spec: FigureSpec; body: (group: HTMLElement) => FigureBody; testId?: string }) {
  const group = useRef<HTMLDivElement>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  const download = async (format: "svg" | "png") => {
    if (!group.current || busy) return;
    setBusy(true);
    setProblem(null);
    try {
      const { file, ...words } = spec;
      const svg = composeFigure({ ...words, body: body(group.current) });
      const name = figureFileName({ ...file, extension: format });
      save(format === "svg" ? new Blob([svg], { type: "image/svg+xml" }) : await rasterise(svg), name);
    } catch (e) {
      setProblem(e instanceof Error ? e.message : "The figure could not be made.");
    } finally {
      setBusy(false);
    }
  };

  const button =
    "rounded border border-ink-200 bg-white px-1.5 py-0.5 text-[11px] font-medium text-ink-600 hover:border-ochre-400 hover:text-ochre-800 focus-visible:outline-2 focus-visible:outline-offset-1 focus-visible:outline-ochre-500 disabled:opacity-50";
  return (
    <div ref={group} role="group" aria-label={`Download figure: ${spec.title}`} className="flex shrink-0 items-center gap-1 print:hidden" data-testid={testId}>
      <span className="mr-0.5 text-[11px] text-ink-500" aria-hidden="true">
        Download figure
      </span>
      <button type="button" className={button} disabled={busy} onClick={() => void download("svg")} aria-label={`Download ${spec.title} as SVG`} data-testid={testId ? `${testId}-svg` : undefined}>
        SVG
      </button>
      <button type="button" className={button} disabled={busy} onClick={() => void download("png")} aria-label={`Download ${spec.title} as PNG`} data-testid={testId ? `${testId}-png` : undefined}>
        PNG
      </button>
      {problem ? (
        <span role="alert" className="text-[11px] text-red-700">
          {problem}
        </span>
      ) : null}
    </div>
  );
}

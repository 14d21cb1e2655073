/**
 * Renders a composed digest as an e-mail: subject, HTML and plain text.
 *
 * Charts: each indicator's chart is ECharts SSR output (SVG) placed inline in
 * the HTML. Inline SVG shows in Apple Mail, Thunderbird, most web views and
 * Tessera's Outbox; clients that strip SVG (notably Gmail and Outlook) still
 * get the same numbers in the lists above each chart and a link to the
 * interactive timeline, and the plain-text part carries everything. We chose
 * inline over a CID attachment because CID images of type SVG are refused by
 * the same clients that strip inline SVG, while inline keeps one part per
 * mail and no attachment noise.
 */
import { SIGNIFICANCE_LABELS, type SignificanceClass } from "@/lib/runs/types";
import { escapeHtml } from "@/lib/security/html";
import { CHART_CAPTION, DIGEST_INK, DIGEST_OCHRE } from "./chart";
import { LOCAL_CLUSTER_LABELS, type DigestContent } from "./compose";

export const DIGEST_CAUTION =
  "Significance is not causation. Results depend on the regional units and their boundaries and on the weights chosen; many indicator-periods tested at once produce false positives unless corrected; small n makes analytical p-values unreliable; rates on small populations are noisy.";

export interface DigestRenderInput {
  readonly content: DigestContent;
  readonly workspace: { readonly slug: string; readonly name: string };
  readonly recipientName: string;
  /** What the digest covers, e.g. "run 12" or "week 2026-W49". */
  readonly coverage: string;
  readonly runId: number | null;
  /** The run as the screens name it (lib/runs/label runLabel); without it, "run <id>". */
  readonly runLabel?: string | null;
  /** The same for the run the previous digest reported. */
  readonly baselineRunLabel?: string | null;
  /** How the run was computed, in one line (lib/runs/comparability describeMethod); null without a run. */
  readonly runMethod?: string | null;
  readonly indicatorLabels: ReadonlyMap<string, string>;
  /** Indicator code → SVG markup. */
  readonly charts: ReadonlyMap<string, string>;
  /** Absolute base of links into the app (NEXTAUTH_URL). */
  readonly baseUrl: string;
  readonly unsubscribeUrl: string;
}

export interface RenderedDigest {
  readonly subject: string;
  readonly html: string;
  readonly text: string;
}

const classLabel = (c: SignificanceClass | null) => (c === null ? "not analysed" : SIGNIFICANCE_LABELS[c]);
const signed = (x: number) => `${x >= 0 ? "+" : "−"}${Math.abs(x).toFixed(3)}`;

export function renderDigest(input: DigestRenderInput): RenderedDigest {
  const { content, workspace, indicatorLabels, baseUrl } = input;
  const base = baseUrl.replace(/\/+$/, "");
  const label = (code: string) => indicatorLabels.get(code) ?? code;
  const runParam = input.runId !== null ? `&run=${input.runId}` : "";
  const timelineUrl = (code: string) => `${base}/w/${encodeURIComponent(workspace.slug)}/timeline?indicator=${encodeURIComponent(code)}${runParam}`;
  const digestsUrl = `${base}/w/${encodeURIComponent(workspace.slug)}/digests`;
  const deskUrl = `${base}/w/${encodeURIComponent(workspace.slug)}/desk`;

  const comparable = content.baseline.kind === "previous-digest";
  const runName = input.runId !== null ? (input.runLabel ?? `run ${input.runId}`) : "the latest run";
  const baselineName = content.baseline.kind === "first" ? "" : (input.baselineRunLabel ?? `run ${content.baseline.runId}`);
  const subject = content.baseline.kind === "method-changed"
    ? `Tessera digest · ${workspace.name}: method changed, no comparison (${input.coverage})`
    : content.empty
      ? `Tessera digest · ${workspace.name}: ${comparable ? "nothing changed" : "nothing to report"} (${input.coverage})`
      : comparable
        ? `Tessera digest · ${workspace.name}: ${content.classChanges.length} class change${content.classChanges.length === 1 ? "" : "s"} (${input.coverage})`
        : `Tessera digest · ${workspace.name}: ${content.classChanges.length} significant indicator-period${content.classChanges.length === 1 ? "" : "s"} (${input.coverage})`;

  // What the numbers are compared with, said before any number.
  const baselineText =
    input.runId === null
      ? "There is no completed run in this workspace yet, so there is nothing to report."
      : content.baseline.kind === "previous-digest"
        ? `Compared with ${baselineName}, which your previous digest reported (same panel, same method).`
        : content.baseline.kind === "method-changed"
          ? `Method changed since your previous digest (${baselineName}): ${content.baseline.sentence}. Below is where ${runName} stands on its own.`
          : `Your first digest of these results: there is no previous digest to compare with, so this shows where ${runName} stands.`;
  const emptyText = comparable
    ? "Nothing changed in the indicators you follow since your previous digest."
    : input.runId === null
      ? null
      : `Nothing in the indicators you follow is significant or moved between periods in ${runName}.`;
  const classTitle = comparable ? "Significance class changed" : `Significant in ${runName}`;
  const classItem = (c: DigestContent["classChanges"][number], esc: (x: string) => string, strong: (x: string) => string) =>
    comparable ? `${esc(classLabel(c.before))} → ${strong(classLabel(c.after))}` : strong(classLabel(c.after));
  const clusterTitle = comparable ? "Newly significant local clusters" : `Significant local clusters in ${runName}`;
  const againstText = (against: "previous-results" | "previous-period") => (against === "previous-results" ? "since your previous digest" : "from the previous period");

  // Plain text.
  const t: string[] = [`Tessera digest for ${input.recipientName}`, `Workspace: ${workspace.name} — ${input.coverage}`];
  if (input.runMethod) t.push(`Method of ${runName}: ${input.runMethod}`);
  t.push("", baselineText, "");
  if (content.empty && emptyText) t.push(emptyText, "");
  if (content.classChanges.length) {
    t.push(`${classTitle}:`);
    for (const c of content.classChanges) t.push(`- ${label(c.indicator)}, ${c.period}: ${classItem(c, (x) => x, (x) => x)}`);
    t.push("");
  }
  if (content.largestChanges.length) {
    t.push("Largest changes in Moran's I:");
    for (const c of content.largestChanges) {
      t.push(`- ${label(c.indicator)}, ${c.period}: I = ${c.I.toFixed(3)} (${signed(c.change)} ${againstText(c.against)})`);
    }
    t.push("");
  }
  if (content.newClusters.length) {
    t.push(`${clusterTitle}:`);
    for (const g of content.newClusters) t.push(`- ${label(g.indicator)}, ${g.period}: ${g.count} ${LOCAL_CLUSTER_LABELS[g.cluster]} — ${g.regions.join(", ")}`);
    t.push("");
  }
  for (const code of content.indicators) t.push(`Timeline of ${label(code)}: ${timelineUrl(code)}`);
  t.push(`Desk: ${deskUrl}`, "", DIGEST_CAUTION, "", `Change this digest: ${digestsUrl}`, `Unsubscribe: ${input.unsubscribeUrl}`);
  const text = t.join("\n");

  // HTML (table layout and inline styles: what mail clients render reliably).
  const h = escapeHtml;
  const section = (title: string, items: string[]) =>
    items.length
      ? `<h2 style="font-size:15px;margin:20px 0 6px;color:${DIGEST_INK}">${h(title)}</h2><ul style="margin:0;padding-left:18px">${items.map((i) => `<li style="margin:3px 0">${i}</li>`).join("")}</ul>`
      : "";
  const link = (href: string, text: string) => `<a href="${h(href)}" style="color:${DIGEST_OCHRE}">${h(text)}</a>`;
  const parts: string[] = [];
  const methodNotice = content.baseline.kind === "method-changed";
  parts.push(
    `<p style="margin:8px 0;${methodNotice ? `padding:8px 10px;border-left:3px solid ${DIGEST_OCHRE};background:#fffbeb;` : ""}">${h(baselineText)}</p>`,
  );
  if (content.empty && emptyText) parts.push(`<p>${h(emptyText)}</p>`);
  parts.push(
    section(
      classTitle,
      content.classChanges.map((c) => `<strong>${h(label(c.indicator))}</strong>, ${h(c.period)}: ${classItem(c, h, (x) => `<strong>${h(x)}</strong>`)}`),
    ),
  );
  parts.push(
    section(
      "Largest changes in Moran's I",
      content.largestChanges.map(
        (c) =>
          `<strong>${h(label(c.indicator))}</strong>, ${h(c.period)}: I = ${c.I.toFixed(3)} (${h(signed(c.change))} ${againstText(c.against)})`,
      ),
    ),
  );
  parts.push(
    section(
      clusterTitle,
      content.newClusters.map((g) => `<strong>${h(label(g.indicator))}</strong>, ${h(g.period)}: ${g.count} ${h(LOCAL_CLUSTER_LABELS[g.cluster])} — ${h(g.regions.join(", "))}`),
    ),
  );
  for (const code of content.indicators) {
    const svg = input.charts.get(code);
    parts.push(
      `<div style="margin:18px 0 0">${svg ? describedChart(svg, `Chart of Moran's I of ${label(code)} by period, with E[I] dashed and significant periods in ochre; the numbers are listed above.`) : ""}<p style="font-size:11px;color:#57534e;margin:4px 0">${h(CHART_CAPTION)} ${link(timelineUrl(code), `Open the timeline of ${label(code)}`)}</p></div>`,
    );
  }
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${h(subject)}</title></head>
<body style="margin:0;background:#f5f5f4;font-family:Helvetica,Arial,sans-serif;color:${DIGEST_INK}">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0"><tr><td align="center" style="padding:16px">
<table role="presentation" cellpadding="0" cellspacing="0" style="width:100%;max-width:600px;background:#ffffff;border-top:4px solid ${DIGEST_OCHRE}"><tr><td style="padding:20px;font-size:14px;line-height:1.45">
<p style="margin:0;font-size:12px;letter-spacing:.08em;text-transform:uppercase;color:${DIGEST_OCHRE}">Tessera digest</p>
<h1 style="margin:4px 0 2px;font-size:20px;color:${DIGEST_INK}">${h(workspace.name)}</h1>
<p style="margin:0 0 8px;color:#57534e">For ${h(input.recipientName)} — ${h(input.coverage)}</p>
${input.runMethod ? `<p style="margin:0 0 8px;font-size:12px;color:#57534e">Method of ${h(runName)}: ${h(input.runMethod)}</p>` : ""}
${parts.join("\n")}
<p style="margin:20px 0 0">${link(deskUrl, "Open the Desk")}</p>
<p style="margin:18px 0 0;padding:10px;background:#fafaf9;border-left:3px solid ${DIGEST_OCHRE};font-size:12px;color:#44403c">${h(DIGEST_CAUTION)}</p>
<p style="margin:18px 0 0;font-size:12px;color:#57534e">${link(digestsUrl, "Change this digest")} · ${link(input.unsubscribeUrl, "Unsubscribe")}</p>
</td></tr></table></td></tr></table></body></html>`;
  return { subject, html, text };
}

/** The chart's SVG as an image with a text alternative (role="img" and aria-label on its root), for readers who cannot see it. */
export function describedChart(svg: string, description: string): string {
  return svg.replace(/^<svg\b/, `<svg role="img" aria-label="${escapeHtml(description)}"`);
}

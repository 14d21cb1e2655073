/**
 * Text made safe to place inside HTML markup. For the few places where a
 * library takes an HTML string rather than text: ECharts renders a tooltip
 * formatter's return value as HTML, so a region code such as
 * `"><img src=x onerror=…>` must be escaped before it goes there. React
 * escapes everything else.
 */
export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c] ?? c);
}

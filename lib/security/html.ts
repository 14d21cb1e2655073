/**
 * Text made safe to place inside HTML markup. For the few places where HTML
 * is written as a string rather than by React: ECharts renders a tooltip
 * formatter's return value as HTML, so a region code such as
 * `"><img src=x onerror=…>` must be escaped before it goes there; digest
 * e-mails and the unsubscribe page are HTML strings too. React escapes
 * everything else.
 */
export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c] ?? c);
}

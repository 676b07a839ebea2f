/**
 * Text that goes into HTML or SVG: every character that could open markup,
 * an entity or an attribute is escaped, so that no title, label or name from
 * a case can become markup or script in a report.
 *
 * @module
 */

/** `s` with & < > " ' escaped. */
export function escapeHtml(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;")
    .replace(/'/g, "&#39;");
}

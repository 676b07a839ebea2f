/**
 * CSV cells written by every command: quoted when they hold a comma, quote or line break, and never able to
 * run as a spreadsheet formula.
 *
 * @module
 */

/**
 * A text cell: a cell that begins with = + - @ (or a tab or return) gets a leading ' so that spreadsheets
 * show it rather than run it as a formula (common practice against CSV formula injection); cells with a
 * comma, quote or line break are quoted.
 */
export function csvField(s: string): string {
  const safe = /^[=+\-@\t\r]/.test(s) ? `'${s}` : s;
  return safe !== s || /[",\n\r]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

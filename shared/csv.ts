/**
 * The one CSV-writing rule of Keelson: every CSV the server or the command line writes goes
 * through `toCsv` (or, for a writer that streams its own lines, `csvLine` for every line with text
 * and `csvNumber` for numbers), so that no cell can reach a spreadsheet as a live formula.
 *
 * Formula injection: a spreadsheet treats a cell whose text starts with `=`, `+`, `-`, `@`, a tab
 * or a carriage return as a formula (OWASP, "CSV Injection"). A series, library, spec or person
 * named `=HYPERLINK(…)` would run when a reviewer opens the export. Text cells that start with one
 * of these characters get a leading apostrophe, which spreadsheets show as text, and are quoted.
 * papaparse's `escapeFormulae` applies exactly this rule; `CSV_FORMULA_START` is the pattern.
 *
 * Numbers stay numbers: a cell passed as a `number` is written with JavaScript's shortest
 * round-trip form (so parseFloat gives back the same double) and is never escaped, so
 * -0.0123 stays -0.0123. Pass numbers as numbers, never pre-formatted as strings. Non-finite
 * numbers, null and undefined are written as empty cells (missing).
 */
import Papa from 'papaparse';

/** Text that a spreadsheet would read as a formula. */
export const CSV_FORMULA_START = /^[=+\-@\t\r]/;

export type CsvCell = string | number | boolean | null | undefined;

/** One numeric cell: shortest round-trip digits, empty for NaN/±Infinity/null. */
export function csvNumber(x: number | null | undefined): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '' : String(x);
}

function cell(x: CsvCell): CsvCell {
  if (typeof x === 'number') return Number.isFinite(x) ? x : null;
  return x;
}

/** One CSV line (no line break) with the formula rule applied to its text cells. */
export function csvLine(cells: readonly CsvCell[]): string {
  return Papa.unparse([cells.map(cell)], { escapeFormulae: CSV_FORMULA_START, newline: '\n' });
}

/**
 * Rows to CSV text with the formula rule applied to every text cell. Rows may have different
 * lengths (a keyed header block above a table). Ends with a final line break.
 */
export function toCsv(rows: readonly (readonly CsvCell[])[], newline: '\n' | '\r\n' = '\r\n'): string {
  if (rows.length === 0) return '';
  const data = rows.map((r) => r.map(cell));
  return Papa.unparse(data, { escapeFormulae: CSV_FORMULA_START, newline }) + newline;
}

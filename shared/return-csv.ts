/**
 * The one reader of return-library CSVs, shared by uploads (server/services/libraries.ts) and the
 * command line (`keelson estimate --data`, bin/keelson-cli.ts): a `date` column and one column per series.
 *
 * Accepted: comma, semicolon or tab separators (detected by papaparse), a UTF-8 byte-order mark,
 * CRLF or LF line ends, monthly dates (YYYY-MM, YYYYMM) or daily dates (YYYY-MM-DD, YYYYMMDD),
 * missing values as an empty cell or NA / N/A / NaN / null. Rows out of date order are sorted
 * ascending and the preview says so. Everything else that is wrong is refused with a list of
 * `{ row, column, message }` issues (row = line of the file, the header is row 1), thrown as a
 * `ReturnCsvError`: a `KeelsonApiError` (what the API answers) that also carries each problem's
 * code and facts (`problems`), so the command line can word them in its own one-line style.
 * Pure: no Node modules (input is bytes or text), so the client could use it too.
 */
import Papa from 'papaparse';
import { KeelsonApiError, type ErrorIssue } from './errors';
import {
  MAX_COLUMNS,
  type Frequency,
  type SeriesKind,
  type SeriesStats,
  type UploadColumn,
  type UploadWarning,
  type Units,
} from './libraries';
import { detectUnits, PERCENT_SCALE, SCALE_RATIO } from './units';

export interface ParsedCsv {
  readonly frequency: Frequency;
  /** Series column names (the date column excluded), in file order. */
  readonly columns: string[];
  /** Ascending dates, YYYY-MM or YYYY-MM-DD. */
  readonly dates: string[];
  /** The line of the file each date came from (header = line 1), same order as `dates`. */
  readonly lines: number[];
  /** One array per column, in the file's own units, NaN for missing. */
  readonly values: Float64Array[];
  readonly units: Units;
  readonly warnings: UploadWarning[];
  readonly series: UploadColumn[];
}

const MAX_ISSUES = 50;
const MISSING = new Set(['', 'na', 'n/a', 'nan', 'null', '#n/a']);
const NUMBER_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const JUMP_SD = 10;

/** What went wrong, for a caller that words problems itself (the command line). */
export type CsvProblemCode =
  | 'not_text'
  | 'parse'
  | 'too_wide'
  | 'no_date_column'
  | 'header_cell'
  | 'duplicate_column'
  | 'no_series'
  | 'field_count'
  | 'not_a_date'
  | 'mixed_frequency'
  | 'duplicate_date'
  | 'out_of_order'
  | 'too_large'
  | 'not_a_number'
  | 'no_rows'
  | 'empty_column';

/** One problem: the API issue plus its code and the facts behind the message. */
export interface CsvProblem {
  readonly code: CsvProblemCode;
  /** Line of the file (header = 1). */
  readonly row?: number;
  readonly column?: string;
  /** The offending cell as found (trimmed). */
  readonly cell?: string;
  /** Date of the row, canonical, when it was read. */
  readonly date?: string;
  /** field_count: fields found and expected; out_of_order / duplicate_column: the earlier value. */
  readonly found?: number;
  readonly expected?: number;
  readonly previous?: string;
  /** The reader's own wording (what the API sends). */
  readonly message: string;
}

/** A refused CSV: the API error (code, message, issues) with the problems behind it. */
export class ReturnCsvError extends KeelsonApiError {
  readonly problems: readonly CsvProblem[];
  constructor(status: 'unprocessable' | 'bad_request', message: string, issues: ErrorIssue[], problems: readonly CsvProblem[]) {
    super(status, message, issues);
    this.name = 'ReturnCsvError';
    this.problems = problems;
  }
}

type Found = Omit<CsvProblem, 'message' | 'row' | 'column'>;
const problemOf = new WeakMap<ErrorIssue, Found>();

function issue(row: number | undefined, column: string | undefined, message: string, found: Found = { code: 'parse' }): ErrorIssue {
  const i: ErrorIssue = { path: [], message, ...(row !== undefined ? { row } : {}), ...(column !== undefined ? { column } : {}) };
  problemOf.set(i, found);
  return i;
}

function refuse(issues: ErrorIssue[], status: 'unprocessable' | 'bad_request' = 'unprocessable'): never {
  const first = issues[0]!;
  const more = issues.length > 1 ? ` (and ${issues.length - 1} more problem${issues.length > 2 ? 's' : ''})` : '';
  const problems = issues.map((i) => ({
    ...(problemOf.get(i) ?? { code: 'parse' as const }),
    ...(i.row !== undefined ? { row: i.row } : {}),
    ...(i.column !== undefined ? { column: i.column } : {}),
    message: i.message,
  }));
  throw new ReturnCsvError(status, `${first.message}${more}. Nothing was saved.`, issues, problems);
}

function quoteCell(s: string): string {
  const t = s.length > 40 ? `${s.slice(0, 40)}…` : s;
  return JSON.stringify(t);
}

function daysInMonth(y: number, m: number): number {
  return new Date(Date.UTC(y, m, 0)).getUTCDate();
}

/** Parses one date cell into a canonical string and its frequency, or null. */
export function parseDateCell(raw: string): { date: string; frequency: Frequency } | null {
  const s = raw.trim();
  let y: number, m: number, d: number | undefined;
  let r: RegExpExecArray | null;
  if ((r = /^(\d{4})-(\d{2})-(\d{2})$/.exec(s)) || (r = /^(\d{4})(\d{2})(\d{2})$/.exec(s))) {
    y = Number(r[1]);
    m = Number(r[2]);
    d = Number(r[3]);
  } else if ((r = /^(\d{4})-(\d{1,2})$/.exec(s)) || (r = /^(\d{4})(\d{2})$/.exec(s))) {
    y = Number(r[1]);
    m = Number(r[2]);
  } else return null;
  if (y < 1800 || y > 2200 || m < 1 || m > 12) return null;
  const mm = String(m).padStart(2, '0');
  if (d === undefined) return { date: `${y}-${mm}`, frequency: 'monthly' };
  if (d < 1 || d > daysInMonth(y, m)) return null;
  return { date: `${y}-${mm}-${String(d).padStart(2, '0')}`, frequency: 'daily' };
}

/** count, missing, mean, sd (divisor T), min, max of a column; NaN = missing. */
export function columnStats(v: Float64Array | readonly number[]): SeriesStats {
  let n = 0;
  let sum = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < v.length; i++) {
    const x = v[i]!;
    if (Number.isNaN(x)) continue;
    n++;
    sum += x;
    if (x < min) min = x;
    if (x > max) max = x;
  }
  if (n === 0) return { count: 0, missing: v.length, mean: null, sd: null, min: null, max: null };
  const mean = sum / n;
  let ss = 0;
  for (let i = 0; i < v.length; i++) {
    const x = v[i]!;
    if (!Number.isNaN(x)) ss += (x - mean) * (x - mean);
  }
  return { count: n, missing: v.length - n, mean, sd: Math.sqrt(ss / n), min, max };
}

/** k-th smallest value of `a` (0-based), rearranging `a` in place: Hoare's quickselect, O(n) on average. */
function select(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1]!;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i]! < pivot) i++;
      while (a[j]! > pivot) j--;
      if (i <= j) {
        const tmp = a[i]!;
        a[i] = a[j]!;
        a[j] = tmp;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k]!;
  }
  return a[k]!;
}

/** Median of `a` (no NaN); works on a copy. */
function medianOf(a: Float64Array): number {
  const s = Float64Array.from(a);
  const h = s.length >> 1;
  if (s.length % 2) return select(s, h);
  const upper = select(s, h);
  let lower = -Infinity;
  for (let i = 0; i < h; i++) if (s[i]! > lower) lower = s[i]!; // after select, s[0..h-1] ≤ s[h]
  return (lower + upper) / 2;
}

function finite(v: Float64Array): Float64Array {
  let n = 0;
  for (let i = 0; i < v.length; i++) if (!Number.isNaN(v[i]!)) n++;
  if (n === v.length) return v;
  const out = new Float64Array(n);
  let j = 0;
  for (let i = 0; i < v.length; i++) if (!Number.isNaN(v[i]!)) out[j++] = v[i]!;
  return out;
}

/**
 * The observation farthest from the median, in robust standard deviations (1.4826 × median absolute
 * deviation, a common-practice scale that one outlier cannot inflate, unlike the sample sd).
 */
function worstJump(v: Float64Array): { t: number; z: number } | null {
  const xs = finite(v);
  if (xs.length < 5) return null;
  const med = medianOf(xs);
  const mad = medianOf(xs.map((x) => Math.abs(x - med)));
  if (!(mad > 0)) return null;
  const s = 1.4826 * mad;
  let best: { t: number; z: number } | null = null;
  for (let t = 0; t < v.length; t++) {
    const x = v[t]!;
    if (Number.isNaN(x)) continue;
    const z = Math.abs(x - med) / s;
    if (!best || z > best.z) best = { t, z };
  }
  return best;
}

/** A series name folded for matching: lower case, letters and digits only ("Mkt-RF" → "mktrf"). */
export function foldName(name: string): string {
  return name.normalize('NFKD').toLowerCase().replace(/[^a-z0-9]+/g, '');
}

/** Folded names that read as a risk-free rate: RF, R_f, risk-free (rate), T-bill (rate), 1- or 3-month bill, cash. */
const RISK_FREE_NAMES = new Set(['rf', 'rfr', 'rfree', 'riskfree', 'riskfreerate', 'rfrate', 'tbill', 'tbills', 'tbillrate', 'tb1m', 'tb3m', 'bill1m', 'bill3m', 'cash', 'cashrate']);

export function looksRiskFree(name: string): boolean {
  return RISK_FREE_NAMES.has(foldName(name));
}

export function suggestKind(name: string): SeriesKind {
  return looksRiskFree(name) ? 'rf' : 'asset';
}

/**
 * Name-only suggestions for the columns of a file: the first risk-free-like column is suggested as
 * the risk-free rate (a library holds at most one), everything else as a test asset.
 */
export function nameSuggestions(columns: readonly string[]): Pick<UploadColumn, 'suggestedKind' | 'suggestedTraded' | 'suggestion'>[] {
  let rfTaken: string | null = null;
  return columns.map((name) => {
    if (looksRiskFree(name)) {
      if (rfTaken === null) {
        rfTaken = name;
        return { suggestedKind: 'rf', suggestedTraded: true, suggestion: { source: 'name', reason: `Suggested risk-free: the name ${name} reads as a risk-free rate` } };
      }
      return {
        suggestedKind: 'asset',
        suggestedTraded: true,
        suggestion: { source: 'none', reason: `${name} also reads as a risk-free rate, but ${rfTaken} was suggested; a library keeps at most one` },
      };
    }
    return { suggestedKind: 'asset', suggestedTraded: true, suggestion: { source: 'none', reason: 'No earlier series of this name: a test asset unless you choose otherwise' } };
  });
}

function decodeText(input: Uint8Array | string): string {
  if (typeof input === 'string') {
    const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input;
    if (text.trim() === '') refuse([issue(undefined, undefined, 'The file is empty', { code: 'no_rows' })], 'bad_request');
    return text;
  }
  const buf = input;
  if (buf.length === 0) refuse([issue(undefined, undefined, 'The file is empty', { code: 'no_rows' })], 'bad_request');
  if (buf[0] === 0x50 && buf[1] === 0x4b) {
    refuse([issue(undefined, undefined, 'The file is a zipped workbook, not a CSV: save it as CSV (comma- or semicolon-separated) first', { code: 'not_text' })], 'bad_request');
  }
  if (buf.subarray(0, 8192).includes(0)) {
    refuse([issue(undefined, undefined, 'The file is not a text CSV (it holds binary data)', { code: 'not_text' })], 'bad_request');
  }
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(buf);
  } catch {
    refuse([issue(undefined, undefined, 'The file is not UTF-8 text: save the CSV with UTF-8 encoding', { code: 'not_text' })], 'bad_request');
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  if (text.trim() === '') refuse([issue(undefined, undefined, 'The file is empty', { code: 'no_rows' })], 'bad_request');
  return text;
}

/** Refuses an absurdly wide header before papaparse has to split every row of it. */
function checkHeaderWidth(text: string): void {
  const nl = text.indexOf('\n');
  const first = nl < 0 ? text : text.slice(0, nl);
  let best = 0;
  for (const ch of [',', ';', '\t']) {
    let c = 0;
    for (let i = first.indexOf(ch); i >= 0; i = first.indexOf(ch, i + 1)) c++;
    if (c > best) best = c;
  }
  if (best > MAX_COLUMNS) {
    refuse([
      issue(1, undefined, `The header has ${(best + 1).toLocaleString('en')} columns; a library holds at most ${MAX_COLUMNS.toLocaleString('en')} series`, { code: 'too_wide' }),
    ]);
  }
}

/** How to read. Uploads sort rows out of date order (with a warning); the command line refuses them. */
export interface ReadOptions {
  /** 'sort' (default): sort ascending and warn; 'refuse': an `out_of_order` problem. */
  readonly order?: 'sort' | 'refuse';
}

/**
 * Parses a return-library CSV (bytes of a file or its text). Throws `ReturnCsvError` (400 for a
 * file that is not CSV text, 422 for content problems) with `issues` naming row and column;
 * returns the parsed, checked table.
 */
export function parseReturnCsv(input: Uint8Array | string, opts: ReadOptions = {}): ParsedCsv {
  const text = decodeText(input);
  checkHeaderWidth(text);
  const parsed = Papa.parse<string[]>(text, { delimitersToGuess: [',', ';', '\t'], skipEmptyLines: false });
  const issues: ErrorIssue[] = [];
  for (const e of parsed.errors) {
    if (e.type === 'Delimiter') continue; // one column only: handled below as "no series columns"
    issues.push(issue(e.row !== undefined ? e.row + 1 : undefined, undefined, `Row ${e.row !== undefined ? e.row + 1 : '?'}: ${e.message}`));
    if (issues.length >= 5) break;
  }
  if (issues.length) refuse(issues);
  const data = parsed.data;
  const header = (data[0] ?? []).map((h) => String(h).trim());
  if (header.length > MAX_COLUMNS + 1) {
    refuse([issue(1, undefined, `The header has ${header.length} columns; a library holds at most ${MAX_COLUMNS} series`, { code: 'too_wide' })]);
  }

  // Header
  const dateIdx = header.findIndex((h) => h.toLowerCase() === 'date');
  if (dateIdx < 0) {
    const looksLikeData = header.length > 0 && parseDateCell(header[0]!) !== null;
    refuse([
      issue(
        1,
        undefined,
        looksLikeData
          ? 'Row 1 looks like data, not a header: add a header row with a column named date and one name per series'
          : `No column named date in the header (found ${header.slice(0, 5).map(quoteCell).join(', ')}${header.length > 5 ? ', …' : ''}); the first row must name a date column and one column per series`,
        { code: 'no_date_column', cell: header[0] ?? '' },
      ),
    ]);
  }
  const seen = new Map<string, number>();
  header.forEach((h, j) => {
    if (h === '') {
      issues.push(issue(1, `#${j + 1}`, `Row 1, column ${j + 1}: the header cell is empty; give every series a name`, { code: 'header_cell', cell: '' }));
      return;
    }
    if (h.length > 120) issues.push(issue(1, h.slice(0, 40), `Row 1, column ${j + 1}: the name is longer than 120 characters`, { code: 'header_cell', cell: h }));
    const key = h.toLowerCase();
    const prev = seen.get(key);
    if (prev !== undefined) {
      issues.push(
        issue(1, h, `Row 1: the column name ${quoteCell(h)} appears twice (columns ${prev + 1} and ${j + 1}); names must be unique`, { code: 'duplicate_column', cell: h, previous: header[prev]! }),
      );
    } else seen.set(key, j);
  });
  if (issues.length) refuse(issues.slice(0, MAX_ISSUES));
  const seriesIdx = header.map((_, j) => j).filter((j) => j !== dateIdx);
  if (seriesIdx.length === 0) refuse([issue(1, undefined, 'The header has a date column but no series columns (is the file separated by commas, semicolons or tabs?)', { code: 'no_series' })]);
  const columns = seriesIdx.map((j) => header[j]!);
  const dateName = header[dateIdx]!;

  // Rows
  const rowDates: string[] = [];
  const rowLines: number[] = [];
  const cols: Float64Array[] = columns.map(() => new Float64Array(Math.max(0, data.length - 1)));
  let nRows = 0;
  let frequency: Frequency | null = null;
  let frequencyLine = 0;
  const firstLineOfDate = new Map<string, number>();
  for (let i = 1; i < data.length && issues.length < MAX_ISSUES; i++) {
    const row = data[i]!;
    const line = i + 1;
    if (row.length === 1 && row[0]!.trim() === '') continue; // blank line
    if (row.length !== header.length) {
      issues.push(issue(line, undefined, `Row ${line} has ${row.length} field${row.length === 1 ? '' : 's'}; the header has ${header.length}`, { code: 'field_count', found: row.length, expected: header.length }));
      continue;
    }
    const rawDate = row[dateIdx]!;
    const pd = parseDateCell(rawDate);
    if (!pd) {
      issues.push(issue(line, dateName, `Row ${line}, column ${dateName}: ${quoteCell(rawDate)} is not a date (use YYYY-MM, YYYYMM or YYYY-MM-DD)`, { code: 'not_a_date', cell: rawDate.trim() }));
      continue;
    }
    if (frequency === null) {
      frequency = pd.frequency;
      frequencyLine = line;
    } else if (pd.frequency !== frequency) {
      issues.push(
        issue(line, dateName, `Row ${line}, column ${dateName}: ${pd.frequency} date ${pd.date} among ${frequency} dates (row ${frequencyLine} set the frequency); a library holds one frequency`, {
          code: 'mixed_frequency',
          cell: rawDate.trim(),
          date: pd.date,
        }),
      );
      continue;
    }
    const dupOf = firstLineOfDate.get(pd.date);
    if (dupOf !== undefined) {
      issues.push(issue(line, dateName, `Row ${line}, column ${dateName}: the date ${pd.date} already appears in row ${dupOf}`, { code: 'duplicate_date', cell: rawDate.trim(), date: pd.date }));
      continue;
    }
    firstLineOfDate.set(pd.date, line);
    for (let k = 0; k < seriesIdx.length; k++) {
      // Fast path first: a plain number needs no trim and no lower-casing (no garbage per cell).
      let cell = row[seriesIdx[k]!]!;
      let isNumber = NUMBER_RE.test(cell);
      if (!isNumber) {
        cell = cell.trim();
        isNumber = NUMBER_RE.test(cell);
      }
      let v: number;
      if (!isNumber && (cell === '' || MISSING.has(cell.toLowerCase()))) v = NaN;
      else if (isNumber) {
        v = Number(cell);
        if (!Number.isFinite(v)) {
          issues.push(issue(line, columns[k], `Row ${line}, column ${columns[k]}: ${quoteCell(cell)} is too large`, { code: 'too_large', cell, date: pd.date }));
          if (issues.length >= MAX_ISSUES) break;
          continue;
        }
      } else {
        const hint = /^[+-]?\d+,\d+$/.test(cell) ? ' (use a point as the decimal mark)' : cell.endsWith('%') ? ' (drop the % sign; percent is chosen for the whole file)' : '';
        issues.push(issue(line, columns[k], `Row ${line}, column ${columns[k]}: ${quoteCell(cell)} is not a number${hint}`, { code: 'not_a_number', cell, date: pd.date }));
        if (issues.length >= MAX_ISSUES) break;
        continue;
      }
      cols[k]![nRows] = v;
    }
    rowDates.push(pd.date);
    rowLines.push(line);
    nRows++;
  }
  if (issues.length) refuse(issues.slice(0, MAX_ISSUES));
  if (rowDates.length === 0 || frequency === null) refuse([issue(2, undefined, 'The file has a header but no data rows', { code: 'no_rows' })]);

  const warnings: UploadWarning[] = [];
  // Order
  const T = rowDates.length;
  let order: number[] | null = null;
  for (let t = 1; t < T; t++) {
    if (rowDates[t]! < rowDates[t - 1]!) {
      if (opts.order === 'refuse') {
        refuse([
          issue(rowLines[t], dateName, `Row ${rowLines[t]}, column ${dateName}: ${rowDates[t]} comes after ${rowDates[t - 1]} (row ${rowLines[t - 1]}); dates must increase`, {
            code: 'out_of_order',
            date: rowDates[t]!,
            previous: rowDates[t - 1]!,
          }),
        ]);
      }
      order = Array.from({ length: T }, (_, i) => i).sort((a, b) => (rowDates[a]! < rowDates[b]! ? -1 : 1));
      warnings.push({
        code: 'sorted',
        row: rowLines[t],
        message: `Rows were not in date order (row ${rowLines[t]} comes before row ${rowLines[t - 1]}); Keelson sorted them by date, oldest first`,
      });
      break;
    }
  }
  const dates = order ? order.map((i) => rowDates[i]!) : rowDates;
  const lines = order ? order.map((i) => rowLines[i]!) : rowLines;
  const values = cols.map((c) => {
    if (!order) return c.slice(0, T);
    const out = new Float64Array(T);
    for (let t = 0; t < T; t++) out[t] = c[order[t]!]!;
    return out;
  });

  // Columns with no values at all are refused: they cannot be estimated with.
  values.forEach((v, k) => {
    if (v.every((x) => Number.isNaN(x))) issues.push(issue(undefined, columns[k], `Column ${columns[k]} has no values at all`, { code: 'empty_column' }));
  });
  if (issues.length) refuse(issues.slice(0, MAX_ISSUES));

  // Statistics, units and warnings
  const stats = values.map(columnStats);
  // the units rule is shared with the command line (shared/units.ts)
  const { units, pooled, scales } = detectUnits(values);
  const known = scales.filter((s): s is number => s !== null && s > 0);
  columns.forEach((name, k) => {
    const s = scales[k];
    const st = stats[k]!;
    if (s !== null && s > 0 && known.length > 1) {
      if (units === 'decimal' && s > PERCENT_SCALE && s > SCALE_RATIO * pooled) {
        warnings.push({ code: 'percent_among_decimals', column: name, message: `${name} looks like percent among decimals (typical size ${s.toPrecision(3)} against ${pooled.toPrecision(3)})` });
      } else if (units === 'percent' && s < PERCENT_SCALE && s * SCALE_RATIO < pooled) {
        warnings.push({ code: 'decimal_among_percent', column: name, message: `${name} looks like decimals among percent (typical size ${s.toPrecision(3)} against ${pooled.toPrecision(3)})` });
      }
    }
    if (st.count >= 2 && st.min === st.max) warnings.push({ code: 'constant', column: name, message: `${name} is constant (${st.min}) in every row` });
    const jump = worstJump(values[k]!);
    if (jump && jump.z > JUMP_SD) {
      const t = jump.t;
      warnings.push({
        code: 'jump',
        column: name,
        row: lines[t],
        message: `${name} jumps to ${values[k]![t]} on ${dates[t]} (row ${lines[t]}), ${jump.z.toFixed(1)} robust standard deviations from its median`,
      });
    }
    if (st.missing > 0) warnings.push({ code: 'missing', column: name, message: `${name} has ${st.missing} missing value${st.missing === 1 ? '' : 's'}` });
  });

  const named = nameSuggestions(columns);
  const series: UploadColumn[] = columns.map((name, k) => ({ name, stats: stats[k]!, scale: scales[k] ?? null, ...named[k]! }));
  return { frequency, columns, dates, lines, values, units, warnings, series };
}

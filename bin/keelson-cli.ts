/**
 * Keelson command line. `npx keelson estimate --data FILE.csv --factors F1,F2 …` estimates the
 * factor ledger (lib/gmm estimateLedger) on a CSV return library and prints a table or JSON.
 * Bad input: one line on stderr naming the file, line and column or the option; exit code 2.
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import Papa from 'papaparse';
import { isRemoteCommand, REMOTE_USAGE, runRemote } from './remote';
import { estimateLedger, GmmInputError, GmmNumericalError, type LedgerOptions, type LedgerResult } from '../lib/gmm/index';

/** A caller mistake: reported on one line, exit code 2. */
export class CliInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'CliInputError';
  }
}

const USAGE = `usage: keelson estimate --data FILE.csv --factors F1,F2[,…] [options]

Estimates the factor ledger of a linear SDF model by GMM.

  --data FILE.csv        return library: first column "date" (YYYY-MM or YYYY-MM-DD), one column per series
  --factors F1,F2        factor columns (traded unless listed in --non-traded)
  --assets A1,A2         test-asset columns (default: every column that is not a factor nor --rf)
  --rf COLUMN            risk-free column, subtracted from the test assets
  --non-traded F3,…      factors that are not excess returns (no spanning check, no GRS)
  --stage S              first | second | iterated            (default second)
  --weighting W          identity | second-moment (first stage, default identity)
  --lags N|auto          Bartlett HAC lag (default auto = floor(4 (T/100)^(2/9)))
  --form F               centred | uncentred                  (default centred)
  --means-known          no factor-mean correction of the moments
  --level A              significance level for verdicts      (default 0.05)
  --drop-set F1,F2       also test dropping these factors together
  --fm-intercept         intercept in the Fama–MacBeth cross-sections
  --percent              the file is in percent (divided by 100)
  --json                 print the ledger as JSON

Results are statistical evidence, not investment advice.`;

interface Io {
  out: (s: string) => void;
  err: (s: string) => void;
}

const defaultIo: Io = {
  out: (s) => process.stdout.write(s),
  err: (s) => process.stderr.write(s),
};

function list(v: string | undefined): string[] | undefined {
  if (v === undefined) return undefined;
  return v
    .split(',')
    .map((s) => s.trim())
    .filter((s) => s.length > 0);
}

const DATE_RE = /^(\d{4})-(0[1-9]|1[0-2])(?:-(0[1-9]|[12]\d|3[01]))?$/;

export interface LoadedLibrary {
  dates: string[];
  columns: string[];
  values: Map<string, number[]>;
}

/** Parse the CSV return library; every problem names the file, line and column. */
export function loadLibrary(file: string, text: string, percent: boolean): LoadedLibrary {
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: 'greedy' });
  if (parsed.errors.length > 0) {
    const e = parsed.errors[0];
    throw new CliInputError(`${file} line ${(e.row ?? 0) + 1}: malformed CSV (${e.message})`);
  }
  const rows = parsed.data;
  if (rows.length < 2) throw new CliInputError(`${file}: needs a header line and at least one data line`);
  const header = rows[0].map((h) => h.trim());
  if (header[0].toLowerCase() !== 'date') throw new CliInputError(`${file} line 1: the first column must be "date", found "${header[0]}"`);
  const columns = header.slice(1);
  if (columns.length === 0) throw new CliInputError(`${file} line 1: no series columns after "date"`);
  const seen = new Set<string>();
  for (const c of columns) {
    if (c === '') throw new CliInputError(`${file} line 1: a column has an empty name`);
    if (seen.has(c)) throw new CliInputError(`${file} line 1: column "${c}" appears twice`);
    seen.add(c);
  }
  const values = new Map<string, number[]>(columns.map((c) => [c, []]));
  const dates: string[] = [];
  for (let r = 1; r < rows.length; r++) {
    const line = r + 1;
    const row = rows[r];
    if (row.length !== header.length)
      throw new CliInputError(`${file} line ${line}: ${row.length} fields, expected ${header.length} (one per header column)`);
    const date = row[0].trim();
    const m = DATE_RE.exec(date);
    if (!m) throw new CliInputError(`${file} line ${line}, column date: "${date}" is not a date (YYYY-MM or YYYY-MM-DD)`);
    if (dates.length > 0) {
      const prev = dates[dates.length - 1];
      if (date.length !== prev.length)
        throw new CliInputError(`${file} line ${line}, column date: "${date}" mixes date formats with "${prev}"`);
      if (date <= prev)
        throw new CliInputError(`${file} line ${line}, column date: "${date}" does not come after "${prev}" (dates must increase, no repeats)`);
    }
    dates.push(date);
    for (let c = 0; c < columns.length; c++) {
      const raw = row[c + 1].trim();
      if (raw === '') throw new CliInputError(`${file} line ${line} (${date}), column ${columns[c]}: missing value`);
      const v = Number(raw);
      if (!Number.isFinite(v)) throw new CliInputError(`${file} line ${line} (${date}), column ${columns[c]}: "${raw}" is not a number`);
      values.get(columns[c])!.push(percent ? v / 100 : v);
    }
  }
  return { dates, columns, values };
}

function parseCommand(argv: string[]) {
  const { values, positionals } = parseArgs({
    args: argv,
    allowPositionals: true,
    strict: true,
    options: {
      data: { type: 'string' },
      factors: { type: 'string' },
      assets: { type: 'string' },
      rf: { type: 'string' },
      'non-traded': { type: 'string' },
      stage: { type: 'string', default: 'second' },
      weighting: { type: 'string', default: 'identity' },
      lags: { type: 'string', default: 'auto' },
      form: { type: 'string', default: 'centred' },
      'means-known': { type: 'boolean', default: false },
      level: { type: 'string', default: '0.05' },
      'drop-set': { type: 'string' },
      'fm-intercept': { type: 'boolean', default: false },
      percent: { type: 'boolean', default: false },
      json: { type: 'boolean', default: false },
      help: { type: 'boolean', short: 'h', default: false },
    },
  });
  return { values, positionals };
}

function oneOf<T extends string>(name: string, v: string, allowed: readonly T[]): T {
  if (!(allowed as readonly string[]).includes(v)) throw new CliInputError(`--${name} must be one of ${allowed.join(', ')}; got "${v}"`);
  return v as T;
}

/** Build the estimateLedger input from the parsed options and CSV. */
export function buildInput(values: ReturnType<typeof parseCommand>['values']) {
  if (!values.data) throw new CliInputError('--data FILE.csv is required');
  const factorNames = list(values.factors);
  if (!factorNames || factorNames.length === 0) throw new CliInputError('--factors F1,F2,… is required (at least one factor column)');
  const stage = oneOf('stage', values.stage!, ['first', 'second', 'iterated'] as const);
  const weighting = oneOf('weighting', values.weighting!, ['identity', 'second-moment'] as const);
  const form = oneOf('form', values.form!, ['centred', 'uncentred'] as const);
  let lags: number | 'auto' = 'auto';
  if (values.lags !== 'auto') {
    if (!/^\d+$/.test(values.lags!)) throw new CliInputError(`--lags must be a whole number ≥ 0 or "auto"; got "${values.lags}"`);
    lags = Number(values.lags);
  }
  const level = Number(values.level);
  if (!/^\s*[0-9.eE+-]+\s*$/.test(values.level!) || !(level > 0 && level < 1))
    throw new CliInputError(`--level must be a number strictly between 0 and 1; got "${values.level}"`);

  let text: string;
  try {
    text = readFileSync(values.data, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new CliInputError(`${values.data}: cannot read the file (${code === 'ENOENT' ? 'no such file' : code ?? 'error'})`);
  }
  const lib = loadLibrary(values.data, text, values.percent ?? false);
  const need = (opt: string, name: string) => {
    if (!lib.values.has(name)) throw new CliInputError(`--${opt}: column "${name}" is not in ${values.data} (columns: ${lib.columns.join(', ')})`);
  };
  factorNames.forEach((f) => need('factors', f));
  if (new Set(factorNames).size !== factorNames.length) throw new CliInputError('--factors names a column twice');
  const rf = values.rf;
  if (rf !== undefined) {
    need('rf', rf);
    if (factorNames.includes(rf)) throw new CliInputError(`--rf column "${rf}" is also listed in --factors`);
  }
  const nonTraded = list(values['non-traded']) ?? [];
  for (const f of nonTraded)
    if (!factorNames.includes(f)) throw new CliInputError(`--non-traded: "${f}" is not one of the --factors (${factorNames.join(', ')})`);
  let assetNames = list(values.assets);
  if (assetNames) {
    assetNames.forEach((a) => need('assets', a));
    for (const a of assetNames) {
      if (factorNames.includes(a)) throw new CliInputError(`--assets: "${a}" is also listed in --factors`);
      if (a === rf) throw new CliInputError(`--assets: "${a}" is the --rf column`);
    }
    if (new Set(assetNames).size !== assetNames.length) throw new CliInputError('--assets names a column twice');
  } else {
    assetNames = lib.columns.filter((c) => !factorNames.includes(c) && c !== rf);
  }
  if (assetNames.length === 0) throw new CliInputError(`${values.data}: no test-asset columns left after the factors${rf ? ' and rf' : ''}`);
  const dropSet = list(values['drop-set']);
  if (dropSet) for (const f of dropSet) if (!factorNames.includes(f)) throw new CliInputError(`--drop-set: "${f}" is not one of the --factors`);
  const T = lib.dates.length;
  const rfCol = rf ? lib.values.get(rf)! : null;
  const returns = Array.from({ length: T }, (_, t) => assetNames!.map((a) => lib.values.get(a)![t] - (rfCol ? rfCol[t] : 0)));
  const factors = Array.from({ length: T }, (_, t) => factorNames.map((f) => lib.values.get(f)![t]));
  const options: LedgerOptions = {
    stage,
    weighting,
    lags,
    form,
    factorMeansKnown: values['means-known'] ?? false,
    level,
    ...(dropSet && dropSet.length ? { dropSet } : {}),
    fmIntercept: values['fm-intercept'] ?? false,
  };
  return {
    dates: lib.dates,
    input: { assetNames, returns, factorNames, factors, traded: factorNames.map((f) => !nonTraded.includes(f)), options },
  };
}

// ---------- table output ----------

const num = (v: number | null | undefined, digits = 4): string => {
  if (v === null || v === undefined) return '–';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-4) return v.toExponential(digits - 1);
  return v.toFixed(Math.max(0, digits - 1 - Math.floor(Math.log10(a))) > 6 ? 6 : Math.max(0, digits - 1 - Math.floor(Math.log10(a))));
};
const pv = (p: number | null | undefined) => (p === null || p === undefined ? '–' : p < 0.0001 ? '<0.0001' : p.toFixed(4));

function table(head: string[], rows: string[][], rightFrom = 1): string {
  const w = head.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const fmt = (r: string[]) => r.map((c, j) => (j >= rightFrom && j < r.length - (head[head.length - 1] === 'verdict' ? 1 : 0) ? c.padStart(w[j]) : c.padEnd(w[j]))).join('  ');
  return [fmt(head), w.map((n) => '─'.repeat(n)).join('  '), ...rows.map(fmt)].join('\n') + '\n';
}

export function renderTable(r: LedgerResult, dates: string[]): string {
  let s = '';
  s += `Factor ledger — SDF GMM, ${r.stage} stage${r.stage === 'iterated' ? ` (${r.iterations} iterations${r.converged ? '' : ', NOT converged'})` : ''}, ${r.options.form} form${r.options.factorMeansKnown ? ', factor means known' : ''}\n`;
  s += `T = ${r.T} (${dates[0]} … ${dates[dates.length - 1]}), N = ${r.N} test assets, K = ${r.K} factors, HAC lag ${r.lags}, level ${r.options.level}\n\n`;
  s += table(
    ['factor', 'b', 'se(b)', 'p(b)', 'λ', 'se(λ)', 'p(λ)', 'drop χ²', 'p(drop)', 'span α', 'p(span)', 'thin β', 'verdict'],
    r.factors.map((f) => [
      f.name + (f.traded ? '' : ' (nt)'),
      num(f.b),
      num(f.seB),
      pv(f.pB),
      num(f.lambda),
      num(f.seLambda),
      pv(f.pLambda),
      f.chi2Drop ? num(f.chi2Drop.stat) : '–',
      pv(f.chi2Drop?.p),
      f.spanning ? num(f.spanning.alpha) : '–',
      pv(f.spanning?.p),
      f.thinBeta ? (f.thinBeta.flag ? `FLAG p=${pv(f.thinBeta.p)}` : 'ok') : '–',
      f.verdict,
    ]),
  );
  s += `\nneeded = b significant (Wald); priced = λ significant; drop = χ² difference with the unrestricted second-stage weighting\n`;
  s += `\nJ = ${num(r.J.stat)} on ${r.J.df} df, p = ${pv(r.J.p)}`;
  s += `   HJ distance = ${num(r.hj)}`;
  s += r.grs ? `   GRS = ${num(r.grs.stat)} ~ F(${r.grs.df1}, ${r.grs.df2}), p = ${pv(r.grs.p)}\n` : '   GRS: not reported (needs every factor traded)\n';
  if (r.jointDrop) {
    s += `\nDrop set {${r.jointDrop.factors.join(', ')}}: Wald ${r.jointDrop.wald ? `${num(r.jointDrop.wald.stat)} (p = ${pv(r.jointDrop.wald.p)})` : '–'}`;
    s += `, drop χ² ${r.jointDrop.chi2Drop ? `${num(r.jointDrop.chi2Drop.stat)} (p = ${pv(r.jointDrop.chi2Drop.p)})` : '–'}`;
    s += r.jointSpanning ? `, joint spanning ${num(r.jointSpanning.stat)} (p = ${pv(r.jointSpanning.p)})\n` : '\n';
  }
  if (r.famaMacBeth) {
    const fm = r.famaMacBeth;
    s += `\nFama–MacBeth${fm.intercept ? ' (with intercept)' : ''}, Shanken-corrected SEs:\n`;
    const rows = [...(fm.zeroBeta ? [fm.zeroBeta] : []), ...fm.factors];
    s += table(['', 'λ', 'se', 'p', 'se (Shanken)', 'p (Shanken)'], rows.map((c) => [c.name, num(c.lambda), num(c.se), pv(c.p), num(c.seShanken), pv(c.pShanken)]));
  }
  s += `\nPricing errors:\n`;
  s += table(['asset', 'mean', 'predicted', 'α', 'se(α)', 't(α)'], r.pricingErrors.map((p) => [p.asset, num(p.meanReturn), num(p.predicted), num(p.alpha), num(p.se), num(p.t, 3)]));
  if (r.warnings.length) s += `\nWarnings:\n${r.warnings.map((w) => `  - ${w}`).join('\n')}\n`;
  s += `\nStatistical evidence, not investment advice.\n`;
  return s;
}

/** Run the CLI; returns the exit code (0 ok, 2 bad input, 1 unexpected failure). */
export async function main(argv: string[], io: Io = defaultIo): Promise<number> {
  try {
    const [command, ...rest] = argv;
    if (command === undefined || command === '--help' || command === '-h' || command === 'help') {
      io.out(USAGE + '\n\n' + REMOTE_USAGE + '\n');
      return command === undefined ? 2 : 0;
    }
    if (isRemoteCommand(command)) return await runRemote(command, rest, io);
    if (command !== 'estimate') throw new CliInputError(`unknown command "${command}" (try: keelson estimate --help)`);
    let parsed;
    try {
      parsed = parseCommand(rest);
    } catch (e) {
      const msg = (e as Error).message.split('\n')[0];
      const unknown = /^Unknown option '([^']+)'/.exec(msg);
      throw new CliInputError(unknown ? `unknown option ${unknown[1]} (see keelson estimate --help)` : msg);
    }
    if (parsed.values.help) {
      io.out(USAGE + '\n');
      return 0;
    }
    if (parsed.positionals.length > 0) throw new CliInputError(`unexpected argument "${parsed.positionals[0]}"`);
    const { input, dates } = buildInput(parsed.values);
    let result: LedgerResult;
    try {
      result = estimateLedger(input);
    } catch (e) {
      if (e instanceof GmmInputError) {
        let where = '';
        if (e.row !== undefined) where += ` line ${e.row + 2} (${dates[e.row]})`;
        if (e.series !== undefined) where += `${where ? ',' : ''} column ${e.series}`;
        throw new CliInputError(`${parsed.values.data}${where}: ${e.message}`);
      }
      if (e instanceof GmmNumericalError) throw new CliInputError(`${parsed.values.data}: ${e.message}`);
      throw e;
    }
    io.out(parsed.values.json ? JSON.stringify(result, null, 2) + '\n' : renderTable(result, dates));
    return 0;
  } catch (e) {
    if (e instanceof CliInputError) {
      io.err(`keelson: ${e.message}\n`);
      return 2;
    }
    io.err(`keelson: unexpected failure: ${e instanceof Error ? e.message.split('\n')[0] : String(e)}\n`);
    return 1;
  }
}

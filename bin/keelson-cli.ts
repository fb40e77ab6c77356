/**
 * Keelson command line. `npx keelson estimate --data FILE.csv --factors F1,F2 …` estimates the
 * factor ledger (lib/gmm estimateLedger) on a CSV return library and prints a table or JSON.
 * Bad input: one line on stderr naming the file, line and column or the option; exit code 2.
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import Papa from 'papaparse';
import { isRemoteCommand, REMOTE_USAGE, runRemote } from './remote';
import {
  bootstrapSdfTests,
  estimateLedger,
  GmmInputError,
  GmmNumericalError,
  withBootstrap,
  type Basis,
  type LedgerBootstrapSettings,
  type LedgerInput,
  type LedgerOptions,
  type LedgerResult,
} from '../lib/gmm/index';
import { detectUnits } from '../shared/units';
import { renderLedgerText } from './ledger-text';
import { runWorkerCommand, WORKER_USAGE } from './worker-command';

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
  --weighting W          identity | second-moment | covariance  (first-stage weighting, default identity)
  --lags N|auto          Bartlett HAC lag (default auto = floor(4 (T/100)^(2/9)))
  --form F               centred | uncentred                  (default centred)
  --means-known          no factor-mean correction of the moments
  --level A              significance level for verdicts      (default 0.05)
  --drop-set F1,F2       also test dropping these factors together
  --fm-intercept         intercept in the Fama–MacBeth cross-sections
  --basis B              standard | robust | bootstrap: the p-values the verdicts rest on
                         (default robust for --stage first, standard otherwise; robust needs --stage first)
  --bootstrap-draws N    bootstrap p-values beside the others (99…10000 draws; --basis bootstrap: default 999)
  --bootstrap-scheme S   iid | block                          (default iid)
  --block-length N       block length for --bootstrap-scheme block (default ceil(T^(1/3)))
  --seed S               bootstrap seed, 0…2147483647        (default 1)
  --percent              the file is in percent (divided by 100)
  --decimal              the file is in decimals even though its numbers look like percent
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
      decimal: { type: 'boolean', default: false },
      basis: { type: 'string' },
      'bootstrap-draws': { type: 'string' },
      'bootstrap-scheme': { type: 'string' },
      'block-length': { type: 'string' },
      seed: { type: 'string' },
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

function wholeNumber(flag: string, v: string, lo: number, hi: number): number {
  if (!/^\d+$/.test(v) || Number(v) < lo || Number(v) > hi) throw new CliInputError(`--${flag} must be a whole number from ${lo} to ${hi}; got "${v}"`);
  return Number(v);
}

/** The basis and bootstrap settings from the flags; refuses contradictory combinations. */
export function bootstrapChoice(values: ReturnType<typeof parseCommand>['values'], stage: 'first' | 'second' | 'iterated'): { basis?: Basis; bootstrap?: LedgerBootstrapSettings } {
  const basis = values.basis === undefined ? undefined : oneOf('basis', values.basis, ['standard', 'robust', 'bootstrap'] as const);
  if (basis === 'robust' && stage !== 'first')
    throw new CliInputError(`--basis robust needs a first-stage run (robust SEs need a weighting that does not depend on b): add --stage first`);
  const asked = basis === 'bootstrap' || values['bootstrap-draws'] !== undefined;
  if (!asked) {
    for (const f of ['bootstrap-scheme', 'block-length', 'seed'] as const)
      if (values[f] !== undefined) throw new CliInputError(`--${f} needs the bootstrap: add --bootstrap-draws N or --basis bootstrap`);
    return basis ? { basis } : {};
  }
  const draws = values['bootstrap-draws'] === undefined ? 999 : wholeNumber('bootstrap-draws', values['bootstrap-draws'], 99, 10000);
  const scheme = oneOf('bootstrap-scheme', values['bootstrap-scheme'] ?? 'iid', ['iid', 'block'] as const);
  if (values['block-length'] !== undefined && scheme !== 'block') throw new CliInputError('--block-length needs --bootstrap-scheme block');
  const blockLength = values['block-length'] === undefined ? undefined : wholeNumber('block-length', values['block-length'], 1, 10000);
  const seed = values.seed === undefined ? 1 : wholeNumber('seed', values.seed, 0, 2 ** 31 - 1);
  return { ...(basis ? { basis } : {}), bootstrap: { draws, scheme, seed, ...(blockLength !== undefined ? { blockLength } : {}) } };
}

/** Build the estimateLedger input from the parsed options and CSV. */
export function buildInput(values: ReturnType<typeof parseCommand>['values']) {
  if (!values.data) throw new CliInputError('--data FILE.csv is required');
  const factorNames = list(values.factors);
  if (!factorNames || factorNames.length === 0) throw new CliInputError('--factors F1,F2,… is required (at least one factor column)');
  const stage = oneOf('stage', values.stage!, ['first', 'second', 'iterated'] as const);
  const weighting = oneOf('weighting', values.weighting!, ['identity', 'second-moment', 'covariance'] as const);
  const form = oneOf('form', values.form!, ['centred', 'uncentred'] as const);
  let lags: number | 'auto' = 'auto';
  if (values.lags !== 'auto') {
    if (!/^\d+$/.test(values.lags!)) throw new CliInputError(`--lags must be a whole number ≥ 0 or "auto"; got "${values.lags}"`);
    lags = Number(values.lags);
  }
  const level = Number(values.level);
  if (!/^\s*[0-9.eE+-]+\s*$/.test(values.level!) || !(level > 0 && level < 1))
    throw new CliInputError(`--level must be a number strictly between 0 and 1; got "${values.level}"`);
  const { basis, bootstrap } = bootstrapChoice(values, stage);
  if (values.percent && values.decimal) throw new CliInputError('--percent and --decimal contradict each other: give one');

  let text: string;
  try {
    text = readFileSync(values.data, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new CliInputError(`${values.data}: cannot read the file (${code === 'ENOENT' ? 'no such file' : code ?? 'error'})`);
  }
  const lib = loadLibrary(values.data, text, false);
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
  const used = [...assetNames, ...factorNames, ...(rf ? [rf] : [])];
  const detected = detectUnits(used.map((c) => lib.values.get(c)!));
  if (detected.units === 'percent' && !values.percent && !values.decimal)
    throw new CliInputError(
      `${values.data}: the returns look like percent (typical size ${detected.pooled.toFixed(2)}; decimal returns sit near 0.03): add --percent to divide them by 100, or --decimal if they really are decimals`,
    );
  if (values.percent) for (const c of lib.columns) lib.values.set(c, lib.values.get(c)!.map((v) => v / 100));
  const unitsNote = values.percent
    ? 'percent in the file, divided by 100'
    : detected.units === 'percent'
      ? 'read as decimals as given (--decimal), although they look like percent'
      : 'decimals in the file';
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
    ...(basis ? { basis } : {}),
    ...(bootstrap ? { bootstrap } : {}),
  };
  return {
    dates: lib.dates,
    unitsNote,
    input: { assetNames, returns, factorNames, factors, traded: factorNames.map((f) => !nonTraded.includes(f)), options },
  };
}

// ---------- table output ----------

/** The ledger as text (Keelson's layout, bin/ledger-text.ts). */
export function renderTable(r: LedgerResult, dates: string[], source = 'data', unitsNote?: string): string {
  return renderLedgerText(r, { source, period: `${dates[0]} to ${dates[dates.length - 1]}`, ...(unitsNote ? { unitsNote } : {}) });
}

/**
 * The ledger, with the bootstrap run inline and merged (withBootstrap) when the options ask for
 * bootstrap p-values (basis bootstrap, or bootstrap settings beside another basis).
 */
export function estimateWithBootstrap(input: LedgerInput): LedgerResult {
  const ledger = estimateLedger(input);
  const o = input.options;
  if (!o.bootstrap) return ledger;
  const boot = bootstrapSdfTests({
    returns: input.returns,
    factors: input.factors,
    factorNames: input.factorNames,
    options: {
      stage: o.stage,
      weighting: o.weighting,
      lags: o.lags,
      form: o.form,
      factorMeansKnown: o.factorMeansKnown,
      scheme: o.bootstrap.scheme,
      ...(o.bootstrap.blockLength !== undefined ? { blockLength: o.bootstrap.blockLength } : {}),
      draws: o.bootstrap.draws,
      seed: o.bootstrap.seed,
      ...(o.dropSet && o.dropSet.length ? { dropSet: o.dropSet } : {}),
    },
  });
  return withBootstrap(ledger, boot);
}

/** Run the CLI; returns the exit code (0 ok, 2 bad input, 1 unexpected failure). */
export async function main(argv: string[], io: Io = defaultIo): Promise<number> {
  try {
    const [command, ...rest] = argv;
    if (command === undefined || command === '--help' || command === '-h' || command === 'help') {
      io.out(USAGE + '\n\n' + REMOTE_USAGE + '\n\n' + WORKER_USAGE + '\n');
      return command === undefined ? 2 : 0;
    }
    if (isRemoteCommand(command)) return await runRemote(command, rest, io);
    if (command === 'worker') return await runWorkerCommand(rest, io);
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
    const { input, dates, unitsNote } = buildInput(parsed.values);
    let result: LedgerResult;
    try {
      result = estimateWithBootstrap(input);
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
    io.out(parsed.values.json ? JSON.stringify(result, null, 2) + '\n' : renderTable(result, dates, parsed.values.data!, unitsNote));
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

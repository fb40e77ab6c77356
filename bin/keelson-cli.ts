/**
 * Keelson command line. `npx keelson estimate --data FILE.csv --factors F1,F2 …` estimates the
 * factor ledger (lib/gmm estimateLedger) on a CSV return library and prints a table or JSON.
 * Bad input: one line on stderr naming the file, line and column or the option; exit code 2.
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { isRemoteCommand, REMOTE_USAGE, runRemote } from './remote';
import {
  bootstrapSdfTests,
  estimateLedger,
  GmmInputError,
  withBootstrap,
  type Basis,
  type LedgerBootstrapSettings,
  type LedgerInput,
  type LedgerOutcome,
  type LedgerOptions,
  type LedgerResult,
} from '../lib/gmm/index';
import { gmmFailureMessage } from '../shared/gmm-messages';
import { detectUnits } from '../shared/units';
import { parseReturnCsv, ReturnCsvError, type CsvProblem } from '../shared/return-csv';
import { renderLedgerText } from './ledger-text';
import { holdoutPricing } from '../lib/gmm/index';
import { compareFactorModels, type ModelComparison } from '../server/services/model-compare';
import { splitIndexOf } from '../server/services/holdout-split';
import { formatFixed, formatP } from '../shared/format';
import { DATE_LABEL } from '../shared/jobs';
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
  --versus F1,F3         compare with a second model (these factors, same assets and periods):
                         squared-Sharpe z test (all factors traded) or, nested, the joint spanning
                         test and the drop test; JSON: "comparison"
  --holdout-from DATE    hold-out check: estimate b before DATE (YYYY-MM[-DD]) with these settings,
                         price the periods from DATE on; JSON: "holdout"
  --json                 print the ledger as JSON (per factor pHolm, pBY: adjusted p of the b tests)

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

export interface LoadedLibrary {
  dates: string[];
  columns: string[];
  /** Decimals (divided by 100 with `percent`); NaN = missing (an empty cell, NA, N/A, NaN, null). */
  values: Map<string, number[]>;
  /** The file line of each date (header = line 1). */
  lines: number[];
}

/** One problem of the shared reader in the command line's words: file, line, date, column. */
function cliCsvMessage(file: string, p: CsvProblem): string {
  const at = (withDate: boolean) =>
    `${file}${p.row !== undefined ? ` line ${p.row}` : ''}${withDate && p.date ? ` (${p.date})` : ''}${p.column !== undefined ? `, column ${p.column}` : ''}`;
  switch (p.code) {
    case 'field_count':
      return `${file} line ${p.row}: ${p.found} fields, expected ${p.expected} (one per header column)`;
    case 'not_a_date':
      return `${at(false)}: "${p.cell}" is not a date (YYYY-MM, YYYYMM, YYYY-MM-DD or YYYYMMDD)`;
    case 'out_of_order':
      return `${at(false)}: "${p.date}" does not come after "${p.previous}" (dates must increase, no repeats)`;
    case 'not_a_number':
      return `${at(true)}: "${p.cell}" is not a number`;
    case 'no_date_column':
      return `${file} line 1: the first column must be "date", found "${p.cell}"`;
    case 'duplicate_column':
      return `${file} line 1: column "${p.cell}" appears twice`;
    default: {
      // The reader's own words, without its "Row N, column C: " prefix (the location comes first here).
      const text = p.message.replace(/^Row \d+(, column [^:]+)?: /, '');
      return `${at(true)}: ${text.charAt(0).toLowerCase()}${text.slice(1)}`;
    }
  }
}

/**
 * Reads the CSV return library with the shared reader (the one uploads use: comma, semicolon or
 * tab; YYYY-MM, YYYYMM, YYYY-MM-DD or YYYYMMDD dates; NA, N/A, NaN, null or an empty cell for a
 * missing value). Unlike an upload, rows out of date order are refused rather than sorted.
 * Every problem names the file, line and column.
 */
export function loadLibrary(file: string, text: string, percent: boolean): LoadedLibrary {
  let parsed;
  try {
    parsed = parseReturnCsv(text, { order: 'refuse' });
  } catch (e) {
    if (e instanceof ReturnCsvError) throw new CliInputError(cliCsvMessage(file, e.problems[0]!));
    throw e;
  }
  const values = new Map<string, number[]>(parsed.columns.map((c, k) => [c, Array.from(parsed.values[k]!, (v) => (percent ? v / 100 : v))]));
  return { dates: parsed.dates, columns: parsed.columns, values, lines: parsed.lines };
}

/** Refuses a missing value in a column the estimation uses, naming its line and date. */
function assertNoMissing(file: string, lib: LoadedLibrary, used: readonly string[]): void {
  for (let t = 0; t < lib.dates.length; t++) {
    for (const c of used) {
      if (Number.isNaN(lib.values.get(c)![t]!)) throw new CliInputError(`${file} line ${lib.lines[t]} (${lib.dates[t]}), column ${c}: missing value`);
    }
  }
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
      versus: { type: 'string' },
      'holdout-from': { type: 'string' },
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
  const versus = list(values.versus) ?? [];
  for (const f of nonTraded)
    if (!factorNames.includes(f) && !versus.includes(f)) throw new CliInputError(`--non-traded: "${f}" is not one of the --factors (${factorNames.join(', ')})`);
  let assetNames = list(values.assets);
  if (assetNames) {
    assetNames.forEach((a) => need('assets', a));
    for (const a of assetNames) {
      if (factorNames.includes(a)) throw new CliInputError(`--assets: "${a}" is also listed in --factors`);
      if (a === rf) throw new CliInputError(`--assets: "${a}" is the --rf column`);
    }
    if (new Set(assetNames).size !== assetNames.length) throw new CliInputError('--assets names a column twice');
  } else {
    assetNames = lib.columns.filter((c) => !factorNames.includes(c) && !versus.includes(c) && c !== rf);
  }
  if (values.versus !== undefined) {
    if (versus.length === 0) throw new CliInputError('--versus needs the second model\'s factor columns, e.g. --versus MKT,GROWTH');
    versus.forEach((f) => need('versus', f));
    if (new Set(versus).size !== versus.length) throw new CliInputError('--versus names a column twice');
    for (const f of versus) {
      if (assetNames.includes(f)) throw new CliInputError(`--versus: "${f}" is a test asset (listed in --assets)`);
      if (f === rf) throw new CliInputError(`--versus: "${f}" is the --rf column`);
    }
  }
  if (assetNames.length === 0) throw new CliInputError(`${values.data}: no test-asset columns left after the factors${rf ? ' and rf' : ''}`);
  const dropSet = list(values['drop-set']);
  if (dropSet) for (const f of dropSet) if (!factorNames.includes(f)) throw new CliInputError(`--drop-set: "${f}" is not one of the --factors`);
  const used = [...assetNames, ...factorNames, ...(rf ? [rf] : [])];
  assertNoMissing(values.data, lib, used);
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
  const versusFactors = Array.from({ length: T }, (_, t) => versus.map((f) => lib.values.get(f)![t]));
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
    versus: values.versus === undefined ? null : { factorNames: versus, factors: versusFactors, traded: versus.map((f) => !nonTraded.includes(f)) },
  };
}

/** `--versus`: the second model's factors on the same assets and periods. */
export interface VersusModel {
  factorNames: string[];
  factors: number[][];
  traded: boolean[];
}

/** The nested drop test between the two models (null test when neither factor set holds the other). */
export interface CliNested {
  nested: boolean;
  reason: string | null;
  /** Factors in the larger model that the smaller lacks. */
  dropped: string[];
  /** χ² difference with the larger model's second-stage weighting (first-stage runs: the second stage computed from them). */
  test: { stat: number; df: number; p: number } | null;
}

export type CliComparison = { versus: string[] } & ModelComparison & { nested: CliNested };

/**
 * Compares the model of `input` (A) with the `--versus` model (B) on the same data: the
 * squared-Sharpe z test or, nested, the joint spanning test (server/services/model-compare.ts),
 * plus the nested drop test of the larger model (estimateLedger with the extra factors as drop set).
 */
export function compareWithVersus(input: LedgerInput, v: VersusModel, lags: number): CliComparison {
  const a = input.factorNames;
  const b = v.factorNames;
  const names = [...new Set([...a, ...b])];
  const col = (name: string) => {
    const i = a.indexOf(name);
    return i >= 0 ? { m: input.factors, j: i, traded: input.traded![i] } : { m: v.factors, j: b.indexOf(name), traded: v.traded[b.indexOf(name)] };
  };
  const cols = names.map(col);
  const T = input.factors.length;
  const factors = Array.from({ length: T }, (_, t) => cols.map((c) => c.m[t][c.j]));
  const traded = cols.map((c) => c.traded);
  const model = compareFactorModels({ factors, factorNames: names, traded, lags, modelA: a, modelB: b });
  const aInB = a.every((f) => b.includes(f));
  const bInA = b.every((f) => a.includes(f));
  let nested: CliNested;
  if (aInB && bInA) nested = { nested: false, reason: 'The two models have the same factors.', dropped: [], test: null };
  else if (!aInB && !bInA) nested = { nested: false, reason: 'Neither factor set contains the other.', dropped: [], test: null };
  else {
    const large = bInA ? a : b;
    const dropped = large.filter((f) => !(bInA ? b : a).includes(f));
    const idx = large.map((f) => names.indexOf(f));
    const { bootstrap: _b, basis: _basis, dropSet: _d, ...o } = input.options;
    void _b;
    void _basis;
    void _d;
    try {
      const led = estimateLedger({
        assetNames: input.assetNames,
        returns: input.returns,
        factorNames: large,
        factors: factors.map((r) => idx.map((j) => r[j])),
        traded: idx.map((j) => traded[j]),
        options: { ...o, stage: o.stage === 'first' ? 'second' : o.stage, dropSet: dropped },
      });
      if (!led.ok) nested = { nested: true, reason: `The larger model could not be estimated: ${gmmFailureMessage(led)}`, dropped, test: null };
      else {
        const t = led.ledger.jointDrop?.chi2Drop ?? null;
        nested = { nested: true, reason: t ? null : 'The drop test could not be computed.', dropped, test: t ? { stat: t.stat, df: t.df, p: t.p } : null };
      }
    } catch (e) {
      if (!(e instanceof GmmInputError)) throw e;
      nested = { nested: true, reason: `The larger model could not be estimated: ${e.message}`, dropped, test: null };
    }
  }
  return { versus: [...b], ...model, nested };
}

/** `--holdout-from`: the hold-out check's summary in the JSON. */
export interface CliHoldout {
  from: string;
  splitDate: string | null;
  /** Estimation and hold-out periods. */
  T1: number;
  T: number;
  r2: number;
  r2in: number;
  meanAbsAlpha: number;
  assets: string[];
  /** α₂ per asset (decimals per period), in the order of `assets`. */
  alpha: number[];
  holdoutMean: number[];
  predicted: number[];
  b: number[];
  note: string | null;
}

/** Hold-out pricing (lib/gmm holdout.ts) with the run's settings, split at the first period on or after `from`. */
export function holdoutFrom(input: LedgerInput, dates: readonly string[], from: string): CliHoldout {
  if (!DATE_LABEL.test(from)) throw new CliInputError(`--holdout-from must be a date YYYY-MM or YYYY-MM-DD; got "${from}"`);
  const at = splitIndexOf(dates, from);
  if ('error' in at) throw new CliInputError(`--holdout-from: ${at.error.replace("the run's estimation sample", 'the sample')}`);
  const o = input.options;
  const r = holdoutPricing({
    returns: input.returns,
    factors: input.factors,
    factorNames: input.factorNames,
    assetNames: input.assetNames,
    dates,
    split: { index: at.index },
    options: { stage: o.stage, weighting: o.weighting, lags: o.lags, form: o.form, factorMeansKnown: o.factorMeansKnown },
  });
  if (!r.ok) throw new CliInputError(`--holdout-from: the estimation periods could not be solved: ${r.message}`);
  return {
    from,
    splitDate: r.splitDate,
    T1: r.T1,
    T: r.T2,
    r2: r.r2oos,
    r2in: r.r2in,
    meanAbsAlpha: r.meanAbsAlpha,
    assets: [...r.assetNames],
    alpha: [...r.alpha],
    holdoutMean: [...r.holdoutMean],
    predicted: [...r.predicted],
    b: [...r.b],
    note: r.note,
  };
}

const pct = (x: number) => `${formatFixed(x * 100, 3)} %`;

/** The comparison and hold-out as text lines under the ledger (Keelson's layout). */
export function renderExtras(c: CliComparison | null, h: CliHoldout | null, factorNames: readonly string[]): string {
  const out: string[] = [];
  if (c) {
    out.push('', `Model comparison: A = ${factorNames.join(', ')}  versus  B = ${c.versus.join(', ')}`);
    if (c.sharpe) {
      const s = c.sharpe;
      out.push(`  squared Sharpe ratio  A ${formatFixed(s.a.theta, 4)} (se ${formatFixed(s.a.se, 4)})   B ${formatFixed(s.b.theta, 4)} (se ${formatFixed(s.b.se, 4)})`);
      out.push(`  A − B ${formatFixed(s.diff, 4)}   se ${formatFixed(s.se, 4)}   z ${formatFixed(s.z, 2)}   p ${formatP(s.p)}   (T ${s.T}, HAC lag ${s.lags})`);
      if (s.shared.length) out.push(`  shared factors: ${s.shared.join(', ')} (allowed: the test compares the whole factor sets)`);
    } else if (c.sharpeSpanning) {
      const s = c.sharpeSpanning;
      out.push(`  nested: joint spanning test of ${s.factors.join(', ')} on ${s.on.join(', ')}: χ² ${formatFixed(s.stat, 2)}, df ${s.df}, p ${formatP(s.p)}`);
      out.push(`  ${s.reason}`);
    } else if (c.sharpeRefusal) out.push(`  no Sharpe test: ${c.sharpeRefusal.message}`);
    if (c.nested.test) out.push(`  drop test of ${c.nested.dropped.join(', ')} from the larger model: χ² ${formatFixed(c.nested.test.stat, 2)}, df ${c.nested.test.df}, p ${formatP(c.nested.test.p)}`);
  }
  if (h) {
    out.push('', `Hold-out check from ${h.splitDate ?? h.from}: b estimated on ${h.T1} periods, ${h.T} periods priced`);
    out.push(`  R²_oos ${formatFixed(h.r2, 3)}   (in sample ${formatFixed(h.r2in, 3)})   mean |α₂| ${pct(h.meanAbsAlpha)} per period`);
    const w = Math.max(5, ...h.assets.map((a) => a.length));
    out.push(`  ${'asset'.padEnd(w)}  ${'mean %'.padStart(9)}  ${'model %'.padStart(9)}  ${'α₂ %'.padStart(9)}`);
    h.assets.forEach((a, i) =>
      out.push(`  ${a.padEnd(w)}  ${formatFixed(h.holdoutMean[i] * 100, 3).padStart(9)}  ${formatFixed(h.predicted[i] * 100, 3).padStart(9)}  ${formatFixed(h.alpha[i] * 100, 3).padStart(9)}`),
    );
    if (h.note) out.push(`  ${h.note}`);
  }
  return out.length ? out.join('\n') + '\n' : '';
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
export function estimateWithBootstrap(input: LedgerInput): LedgerOutcome {
  const out = estimateLedger(input);
  const o = input.options;
  if (!out.ok || !o.bootstrap) return out;
  const ledger = out.ledger;
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
  if (!boot.ok) return boot;
  return { ok: true, ledger: withBootstrap(ledger, boot.bootstrap) };
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
    const { input, dates, unitsNote, versus } = buildInput(parsed.values);
    let result: LedgerResult;
    try {
      const out = estimateWithBootstrap(input);
      if (!out.ok) throw new CliInputError(`${parsed.values.data}: ${gmmFailureMessage(out)}`);
      result = out.ledger;
    } catch (e) {
      if (e instanceof GmmInputError) {
        let where = '';
        if (e.row !== undefined) where += ` line ${e.row + 2} (${dates[e.row]})`;
        if (e.series !== undefined) where += `${where ? ',' : ''} column ${e.series}`;
        throw new CliInputError(`${parsed.values.data}${where}: ${e.message}`);
      }
      throw e;
    }
    const gmm = <R>(f: () => R): R => {
      try {
        return f();
      } catch (e) {
        if (e instanceof GmmInputError) throw new CliInputError(`${parsed.values.data}: ${e.message}`);
        throw e;
      }
    };
    const comparison = versus ? gmm(() => compareWithVersus(input, versus, result.lags)) : null;
    const from = parsed.values['holdout-from'];
    const holdout = from !== undefined ? gmm(() => holdoutFrom(input, dates, from)) : null;
    const extra = { ...(comparison ? { comparison } : {}), ...(holdout ? { holdout } : {}) };
    io.out(
      parsed.values.json
        ? JSON.stringify({ ...result, ...extra }, null, 2) + '\n'
        : renderTable(result, dates, parsed.values.data!, unitsNote) + renderExtras(comparison, holdout, input.factorNames),
    );
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

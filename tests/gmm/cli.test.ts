/**
 * The CLI (`npx keelson estimate …`), spawned on generated CSV files in a temp dir: JSON shape,
 * table output, and every bad-input case exits 2 with a one-line message (no stack trace).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { ledgerResultSchema } from '../../shared/ledger';
import { bootstrapSdfTests } from '../../lib/gmm/index';
import { estimateLedger, normalSampler, okOf } from './helpers';
import { main } from '../../bin/keelson-cli';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const launcher = join(root, 'bin', 'keelson.mjs');
let dir = '';

/** In-process run of the same entry (main returns the exit code the launcher sets). */
async function runInProcess(args: string[]) {
  let out = '';
  let err = '';
  const code = await main(args, { out: (s) => (out += s), err: (s) => (err += s) });
  return { code, out, err };
}

function run(args: string[], viaNpx = false) {
  const r = viaNpx
    ? spawnSync('npx', ['--no-install', 'keelson', ...args], { cwd: root, encoding: 'utf8' })
    : spawnSync(process.execPath, [launcher, ...args], { cwd: root, encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

/** Invented library: two traded factors, one non-traded, rf, six invented funds; percent units. */
function makeCsv(T = 180): { text: string; rows: number[][] } {
  const z = normalSampler(99);
  const lines = ['date,MKT,CARRY,GROWTH,RF,Alder,Birch,Cedar,Damson,Elm,Fir'];
  const rows: number[][] = [];
  for (let t = 0; t < T; t++) {
    const mkt = 0.6 + 4 * z();
    const carry = 0.3 + 2.5 * z() + 0.2 * mkt;
    const growth = 0.2 + 1.5 * z();
    const rf = 0.1 + 0.01 * z();
    const funds = [0.7, 0.9, 1.0, 1.1, 1.2, 1.3].map((b, i) => rf + b * mkt + (0.3 * i - 0.6) * carry + 0.2 * (i - 2) * growth + 1.5 * z());
    const vals = [mkt, carry, growth, rf, ...funds].map((v) => Number(v.toFixed(6)));
    rows.push(vals);
    const y = 1990 + Math.floor(t / 12);
    lines.push([`${y}-${String((t % 12) + 1).padStart(2, '0')}`, ...vals].join(','));
  }
  return { text: lines.join('\n') + '\n', rows };
}

let good = '';
let rows: number[][] = [];
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'keelson-cli-'));
  const c = makeCsv();
  rows = c.rows;
  good = join(dir, 'library.csv');
  writeFileSync(good, c.text);
});

function writeCsv(name: string, text: string) {
  const p = join(dir, name);
  writeFileSync(p, text);
  return p;
}

describe('keelson estimate --json', () => {
  it('prints exactly the ledger shape, equal to estimateLedger on the same data', () => {
    const r = run(['estimate', '--data', good, '--factors', 'MKT,CARRY,GROWTH', '--rf', 'RF', '--non-traded', 'GROWTH', '--percent', '--json', '--lags', '3']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    ledgerResultSchema.parse(j);
    for (const key of ['T', 'N', 'K', 'lags', 'stage', 'iterations', 'factors', 'pricingErrors', 'J', 'hj', 'grs', 'famaMacBeth'])
      expect(j).toHaveProperty(key);
    for (const key of ['name', 'b', 'seB', 'tB', 'pB', 'lambda', 'seLambda', 'tLambda', 'pLambda', 'chi2Drop', 'spanning', 'thinBeta', 'verdict'])
      expect(j.factors[0]).toHaveProperty(key);
    expect(Object.keys(j.pricingErrors[0])).toEqual(expect.arrayContaining(['asset', 'alpha', 'se', 't']));
    expect(Object.keys(j.J)).toEqual(['stat', 'df', 'p']);
    expect(j.T).toBe(180);
    expect(j.N).toBe(6);
    expect(j.K).toBe(3);
    expect(j.lags).toBe(3);
    expect(j.factors[2].spanning).toBeNull(); // GROWTH non-traded
    expect(j.grs).toBeNull();
    // same numbers as the library on the same (percent → decimal, rf subtracted) data
    const lib = estimateLedger({
      assetNames: ['Alder', 'Birch', 'Cedar', 'Damson', 'Elm', 'Fir'],
      returns: rows.map((r) => r.slice(4).map((v) => v / 100 - r[3] / 100)),
      factorNames: ['MKT', 'CARRY', 'GROWTH'],
      factors: rows.map((r) => r.slice(0, 3).map((v) => v / 100)),
      traded: [true, true, false],
      options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05, fmIntercept: false },
    });
    for (let k = 0; k < 3; k++) expect(j.factors[k].b).toBeCloseTo(lib.factors[k].b, 8);
    expect(j.J.stat).toBeCloseTo(lib.J.stat, 8);
  });

  it('first stage: chi2Drop reported (methods.md: W* from the second stage computed from it); --assets selects columns; --drop-set adds joint tests; npx works', async () => {
    const r = run(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--assets', 'Alder,Birch,Cedar,Damson', '--stage', 'first', '--percent', '--json'], true);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.stage).toBe('first');
    expect(j.iterations).toBe(0);
    expect(j.N).toBe(4);
    expect(j.factors.every((f: { chi2Drop: { df: number } | null }) => f.chi2Drop !== null && f.chi2Drop.df === 1)).toBe(true);
    const r2 = await runInProcess(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--rf', 'RF', '--stage', 'iterated', '--drop-set', 'MKT,CARRY', '--percent', '--json']);
    const j2 = JSON.parse(r2.out);
    expect(j2.jointDrop.factors).toEqual(['MKT', 'CARRY']);
    expect(j2.jointDrop.chi2Drop.df).toBe(2);
    expect(j2.converged).toBe(true);
  });
});

describe('keelson estimate: weighting, basis and bootstrap flags', () => {
  const base = ['estimate', '--data', '', '--factors', 'MKT,CARRY', '--rf', 'RF', '--percent', '--lags', '2'];
  const args = (...extra: string[]) => base.map((a) => (a === '' ? good : a)).concat(extra);
  const libInput = () => ({
    returns: rows.map((r) => r.slice(2, 3).concat(r.slice(4)).map((v) => v / 100 - r[3] / 100)),
    factors: rows.map((r) => r.slice(0, 2).map((v) => v / 100)),
  });

  it('--basis bootstrap runs the bootstrap inline and merges exactly its numbers (withBootstrap)', async () => {
    const r = await runInProcess(args('--basis', 'bootstrap', '--bootstrap-draws', '99', '--seed', '5', '--drop-set', 'CARRY', '--json'));
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const j = ledgerResultSchema.parse(JSON.parse(r.out));
    expect(j.basis).toBe('bootstrap');
    expect(j.verdictBasis).toBe('bootstrap');
    expect(j.options.bootstrap).toEqual({ draws: 99, scheme: 'iid', seed: 5 });
    const { returns, factors } = libInput();
    const boot = okOf(bootstrapSdfTests({
      returns,
      factors,
      factorNames: ['MKT', 'CARRY'],
      options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, scheme: 'iid', draws: 99, seed: 5, dropSet: ['CARRY'] },
    })).bootstrap;
    expect(j.bootstrap!.pJ).toBe(boot.J.bootstrapP);
    expect(j.bootstrap!.pJointDrop).toBe(boot.joint!.drop!.bootstrapP);
    j.factors.forEach((f, k) => {
      expect(f.bootstrap!.pB).toBe(boot.factors[k].wald.bootstrapP);
      expect(f.bootstrap!.pLambda).toBe(boot.factors[k].lambda!.bootstrapP);
      expect(f.verdict).toBe(f.verdicts.bootstrap);
    });
  });

  it('--bootstrap-draws beside the standard basis: bootstrap p columns, verdicts stay standard; block scheme and seed are kept', async () => {
    const r = await runInProcess(args('--bootstrap-draws', '99', '--bootstrap-scheme', 'block', '--block-length', '6'));
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^ {2}factor +b +se +t +p +p boot +drop χ² +p drop +p drop boot$/m);
    expect(r.out).toMatch(/bootstrap: 99 of 99 block \(length 6\) draws, seed 1, Hall–Horowitz recentring/);
    expect(r.out).toMatch(/J test .*, bootstrap p /);
    const j = JSON.parse((await runInProcess(args('--bootstrap-draws', '99', '--bootstrap-scheme', 'block', '--block-length', '6', '--json'))).out);
    expect(j.verdictBasis).toBe('standard');
    expect(j.bootstrap.scheme).toBe('block');
    expect(j.bootstrap.blockLength).toBe(6);
    for (const f of j.factors) expect(f.verdict).toBe(f.verdicts.standard);
  });

  it('--weighting covariance at the first stage: default basis robust, named in the JSON', async () => {
    const r = await runInProcess(args('--stage', 'first', '--weighting', 'covariance', '--json'));
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.options.weighting).toBe('covariance');
    expect(j.basis).toBe('robust');
    expect(j.factors[0]).toHaveProperty('robust');
    expect(j.factors[0]).toHaveProperty('verdicts');
    const t = await runInProcess(args('--stage', 'first', '--weighting', 'covariance'));
    expect(t.out).toMatch(/first-stage GMM with the covariance weighting Cov\(R\)⁻¹/);
  });

  it('a decimal file runs without a units flag; --decimal keeps percent-looking numbers as they are', async () => {
    const dec = writeCsv('decimal.csv', readFileSync(good, 'utf8').split('\n').map((line, i) => (i === 0 || line === '' ? line : line.split(',').map((c, k) => (k === 0 ? c : String(Number(c) / 100))).join(','))).join('\n'));
    const a = await runInProcess(['estimate', '--data', dec, '--factors', 'MKT,CARRY', '--rf', 'RF', '--lags', '2', '--json']);
    const b = await runInProcess(args('--json'));
    expect(a.code).toBe(0);
    expect(JSON.parse(a.out).factors[0].b).toBeCloseTo(JSON.parse(b.out).factors[0].b, 6);
    const c = await runInProcess(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--rf', 'RF', '--decimal']);
    expect(c.code).toBe(0);
    expect(c.out).toMatch(/units {3}read as decimals as given \(--decimal\), although they look like percent/);
  });
});

describe('keelson estimate (table)', () => {
  it("prints Keelson's own layout: header block, verdicts, Needed? / Priced? sections, fit, cautions, disclaimer", () => {
    const r = run(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--rf', 'RF', '--percent']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Keelson factor ledger\n {2}data {4}.*library\.csv, 1990-01 to 2004-12 \(T = 180\), 7 test assets, 2 factors/); // GROWTH counted as an asset here
    expect(r.out).toMatch(/ {2}units {3}percent in the file, divided by 100; λ, α and mean returns below are in % per period/);
    expect(r.out).toMatch(/ {2}basis {3}standard: the verdicts use the standard p-values at the 5% level/);
    expect(r.out).toMatch(/^Verdicts$/m);
    expect(r.out).toMatch(/^ {2}[■□┄] MKT +(needed and priced|priced, not needed|needed, not priced alone|neither)/m);
    expect(r.out).toMatch(/^Needed\? SDF loading b/m);
    expect(r.out).toMatch(/^ {2}factor +b +se +t +p +drop χ² +p drop$/m);
    expect(r.out).toMatch(/^Priced\? risk premium λ \(% per period\)/m);
    expect(r.out).toMatch(/J test +[0-9.]+ with 5 degrees of freedom, p /);
    expect(r.out).toMatch(/Fama–MacBeth premia/);
    expect(r.out).toMatch(/^Pricing errors \(% per period\)/m);
    expect(r.out).toMatch(/Statistical evidence, not investment advice\.\n$/);
    // no look-alike of a regression printout, no exponent notation beside fixed decimals
    expect(r.out).not.toMatch(/ on \d+ df/);
    expect(r.out).not.toMatch(/\d[eE][+-]\d/);
  });

  it('every number column has one fixed number of decimals', async () => {
    const r = await runInProcess(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--rf', 'RF', '--percent']);
    const block = r.out.split('Pricing errors (% per period)\n')[1].split('\n\n')[0].split('\n').slice(2);
    for (let c = 1; c <= 5; c++) {
      const decimals = new Set(block.map((line) => (line.trim().split(/\s+/)[c].split('.')[1] ?? '').length));
      expect(decimals.size, `column ${c}`).toBe(1);
    }
  });

  it('--help prints usage and exits 0', async () => {
    const r = await runInProcess(['estimate', '--help']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/usage: keelson estimate --data FILE.csv --factors/);
  });
});

// Spawning costs ~1 s of CPU a process on this machine, so two bad-input cases run as real processes
// (exit status and stderr of the launcher) and every case runs in-process through the same
// `main` that the launcher calls (its return value is the process exit code).
const SPAWNED = new Set(['missing file', 'non-numeric cell']);

describe('bad input: exit 2, one line on stderr, no stack trace', () => {
  const header = 'date,MKT,CARRY,RF,Alder,Birch,Cedar,Damson,Elm,Fir,GROWTH';
  const cases: [string, () => string[], RegExp][] = [
    ['missing file', () => ['estimate', '--data', join(dir, 'nope.csv'), '--factors', 'MKT'], /nope\.csv: cannot read the file \(no such file\)/],
    ['no --data', () => ['estimate', '--factors', 'MKT'], /--data FILE\.csv is required/],
    ['no --factors', () => ['estimate', '--data', good], /--factors F1,F2,… is required/],
    ['unknown factor column', () => ['estimate', '--data', good, '--factors', 'MKT,HML'], /--factors: column "HML" is not in .*library\.csv/],
    ['unknown rf column', () => ['estimate', '--data', good, '--factors', 'MKT', '--rf', 'TBILL'], /--rf: column "TBILL" is not in/],
    ['unknown asset column', () => ['estimate', '--data', good, '--factors', 'MKT', '--assets', 'Alder,Zelkova'], /--assets: column "Zelkova" is not in/],
    ['non-traded not a factor', () => ['estimate', '--data', good, '--factors', 'MKT', '--non-traded', 'CARRY'], /--non-traded: "CARRY" is not one of the --factors/],
    ['bad stage', () => ['estimate', '--data', good, '--factors', 'MKT', '--stage', 'fourth'], /--stage must be one of first, second, iterated; got "fourth"/],
    ['bad weighting', () => ['estimate', '--data', good, '--factors', 'MKT', '--weighting', 'flat'], /--weighting must be one of identity, second-moment, covariance; got "flat"/],
    ['percent file without --percent', () => ['estimate', '--data', good, '--factors', 'MKT'], /library\.csv: the returns look like percent \(typical size [0-9.]+; decimal returns sit near 0\.03\): add --percent to divide them by 100, or --decimal if they really are decimals/],
    ['--percent with --decimal', () => ['estimate', '--data', good, '--factors', 'MKT', '--percent', '--decimal'], /--percent and --decimal contradict each other/],
    ['robust basis, second stage', () => ['estimate', '--data', good, '--factors', 'MKT', '--percent', '--basis', 'robust'], /--basis robust needs a first-stage run .*: add --stage first/],
    ['robust basis, iterated', () => ['estimate', '--data', good, '--factors', 'MKT', '--percent', '--basis', 'robust', '--stage', 'iterated'], /--basis robust needs a first-stage run/],
    ['bad basis', () => ['estimate', '--data', good, '--factors', 'MKT', '--basis', 'gut'], /--basis must be one of standard, robust, bootstrap; got "gut"/],
    ['bad draws', () => ['estimate', '--data', good, '--factors', 'MKT', '--bootstrap-draws', '10'], /--bootstrap-draws must be a whole number from 99 to 10000; got "10"/],
    ['bad scheme', () => ['estimate', '--data', good, '--factors', 'MKT', '--bootstrap-draws', '99', '--bootstrap-scheme', 'wild'], /--bootstrap-scheme must be one of iid, block; got "wild"/],
    ['block length without block scheme', () => ['estimate', '--data', good, '--factors', 'MKT', '--bootstrap-draws', '99', '--block-length', '4'], /--block-length needs --bootstrap-scheme block/],
    ['seed without bootstrap', () => ['estimate', '--data', good, '--factors', 'MKT', '--seed', '4'], /--seed needs the bootstrap: add --bootstrap-draws N or --basis bootstrap/],
    ['scheme without bootstrap', () => ['estimate', '--data', good, '--factors', 'MKT', '--bootstrap-scheme', 'block'], /--bootstrap-scheme needs the bootstrap/],
    ['bad seed', () => ['estimate', '--data', good, '--factors', 'MKT', '--bootstrap-draws', '99', '--seed', '1.5'], /--seed must be a whole number from 0 to 2147483647; got "1.5"/],
    ['block too long for the data', () => ['estimate', '--data', good, '--factors', 'MKT', '--percent', '--bootstrap-draws', '99', '--bootstrap-scheme', 'block', '--block-length', '200'], /blockLength must be an integer from 1 to 90/],
    ['bad form', () => ['estimate', '--data', good, '--factors', 'MKT', '--form', 'odd'], /--form must be one of centred, uncentred/],
    ['bad lags', () => ['estimate', '--data', good, '--factors', 'MKT', '--lags', 'x'], /--lags must be a whole number ≥ 0 or "auto"; got "x"/],
    ['lag too long', () => ['estimate', '--data', good, '--factors', 'MKT', '--lags', '500', '--percent'], /lags = 500 is too long for T = 180 periods.*largest allowed lag is 44/],
    ['bad level', () => ['estimate', '--data', good, '--factors', 'MKT', '--level', '5'], /--level must be a number strictly between 0 and 1; got "5"/],
    ['unknown option', () => ['estimate', '--data', good, '--factors', 'MKT', '--bogus'], /unknown option --bogus/],
    ['unknown command', () => ['fit', '--data', good], /unknown command "fit"/],
    ['non-numeric cell', () => ['estimate', '--data', writeCsv('nan.csv', `${header}\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n1990-02,1,abc,0.1,1,2,3,4,5,6,7\n`), '--factors', 'MKT'], /nan\.csv line 3 \(1990-02\), column CARRY: "abc" is not a number/],
    ['missing value', () => ['estimate', '--data', writeCsv('miss.csv', `${header}\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n1990-02,1,2,0.1,,2,3,4,5,6,7\n`), '--factors', 'MKT'], /miss\.csv line 3 \(1990-02\), column Alder: missing value/],
    ['ragged line', () => ['estimate', '--data', writeCsv('ragged.csv', `${header}\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n1990-02,1,2\n`), '--factors', 'MKT'], /ragged\.csv line 3: 3 fields, expected 11/],
    ['bad date', () => ['estimate', '--data', writeCsv('date.csv', `${header}\n1990-13,1,2,0.1,1,2,3,4,5,6,7\n`), '--factors', 'MKT'], /date\.csv line 2, column date: "1990-13" is not a date/],
    ['dates out of order', () => ['estimate', '--data', writeCsv('order.csv', `${header}\n1990-02,1,2,0.1,1,2,3,4,5,6,7\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n`), '--factors', 'MKT'], /order\.csv line 3, column date: "1990-01" does not come after "1990-02"/],
    ['no date column', () => ['estimate', '--data', writeCsv('nodate.csv', `month,MKT,A\n1,2,3\n`), '--factors', 'MKT'], /nodate\.csv line 1: the first column must be "date"/],
    ['duplicate column', () => ['estimate', '--data', writeCsv('dup.csv', `date,MKT,MKT\n1990-01,1,2\n`), '--factors', 'MKT'], /dup\.csv line 1: column "MKT" appears twice/],
    ['too few periods', () => ['estimate', '--data', writeCsv('short.csv', `${header}\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n1990-02,2,1,0.1,2,1,3,5,4,6,8\n`), '--factors', 'MKT', '--percent'], /T = 2 periods is too few/],
  ];
  it.each(cases)('%s', async (name, args, message) => {
    const r = SPAWNED.has(name) ? run(args()) : await runInProcess(args());
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(message);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(/^keelson: /);
    expect(r.err).not.toMatch(/\bat .*\.(ts|js|mjs):\d+/);
  });

  it('a constant column is named with its file and column', async () => {
    const lines = ['date,MKT,FLAT,A,B,C'];
    const z = normalSampler(5);
    const day = new Date(Date.UTC(2001, 0, 1));
    for (let t = 0; t < 60; t++) {
      lines.push(`${day.toISOString().slice(0, 10)},${z()},0.5,${z()},${z()},${z()}`);
      day.setUTCDate(day.getUTCDate() + 1);
    }
    const p = writeCsv('flat.csv', lines.join('\n') + '\n');
    const r = await runInProcess(['estimate', '--data', p, '--factors', 'MKT,FLAT', '--decimal']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/flat\.csv column FLAT: The factor 'FLAT' is constant/);
  });

  it('a collinear factor is named', async () => {
    const lines = ['date,MKT,CARRY,MIX,A,B,C,D'];
    const z = normalSampler(6);
    for (let t = 0; t < 80; t++) {
      const m = z();
      const c = z();
      lines.push(`${1950 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')},${m},${c},${m + c},${z()},${z()},${z()},${z()}`);
    }
    const p = writeCsv('mix.csv', lines.join('\n') + '\n');
    const r = await runInProcess(['estimate', '--data', p, '--factors', 'MKT,CARRY,MIX', '--decimal']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/mix\.csv column MIX: The factor 'MIX' is an exact linear combination of 'MKT', 'CARRY'/);
  });
});

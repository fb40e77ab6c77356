/**
 * The CLI (`npx keelson estimate …`), spawned on generated CSV files in a temp dir: JSON shape,
 * table output, and every bad-input case exits 2 with a one-line message (no stack trace).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { ledgerResultSchema } from '../../shared/ledger';
import { estimateLedger } from '../../lib/gmm/index';
import { normalSampler } from './helpers';
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

describe('keelson estimate (table)', () => {
  it('prints a readable ledger table with verdicts and the evidence disclaimer', () => {
    const r = run(['estimate', '--data', good, '--factors', 'MKT,CARRY', '--rf', 'RF', '--percent']);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^Factor ledger — SDF GMM, second stage, centred form/);
    expect(r.out).toMatch(/T = 180 \(1990-01 … 2004-12\), N = 7 test assets, K = 2 factors/); // GROWTH counted as an asset here
    expect(r.out).toMatch(/factor\s+b\s+se\(b\)\s+p\(b\)\s+λ/);
    expect(r.out).toMatch(/^MKT\s/m);
    expect(r.out).toMatch(/needed and priced|priced, not needed|needed, not priced alone|neither/);
    expect(r.out).toMatch(/J = [0-9.]+ on 5 df/);
    expect(r.out).toMatch(/Fama–MacBeth/);
    expect(r.out).toMatch(/Pricing errors:/);
    expect(r.out).toMatch(/Statistical evidence, not investment advice\./);
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
    ['bad weighting', () => ['estimate', '--data', good, '--factors', 'MKT', '--weighting', 'flat'], /--weighting must be one of identity, second-moment/],
    ['bad form', () => ['estimate', '--data', good, '--factors', 'MKT', '--form', 'odd'], /--form must be one of centred, uncentred/],
    ['bad lags', () => ['estimate', '--data', good, '--factors', 'MKT', '--lags', 'x'], /--lags must be a whole number ≥ 0 or "auto"; got "x"/],
    ['lag too long', () => ['estimate', '--data', good, '--factors', 'MKT', '--lags', '500'], /lags = 500 is too long for T = 180 periods.*largest allowed lag is 44/],
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
    ['too few periods', () => ['estimate', '--data', writeCsv('short.csv', `${header}\n1990-01,1,2,0.1,1,2,3,4,5,6,7\n1990-02,2,1,0.1,2,1,3,5,4,6,8\n`), '--factors', 'MKT'], /T = 2 periods is too few/],
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
    const r = await runInProcess(['estimate', '--data', p, '--factors', 'MKT,FLAT']);
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
    const r = await runInProcess(['estimate', '--data', p, '--factors', 'MKT,CARRY,MIX']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/mix\.csv column MIX: The factor 'MIX' is an exact linear combination of 'MKT', 'CARRY'/);
  });
});

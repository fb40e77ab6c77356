/**
 * The CLI's model-choice options (`keelson estimate … --versus F1,F3`, `--holdout-from DATE`) and
 * the adjusted p per factor in its JSON. In process (bin/keelson-cli.ts `main`) on an invented CSV
 * library in a temp dir. Sources: lib/gmm called directly on the same matrices (identity: the CLI
 * must not change the numbers), statsmodels' `multipletests` (Debian /usr/bin/python3, through the
 * committed fixture tests/fixtures/api-cli-multipletests.json, so no Python at test time) for Holm
 * and BY, and identities that must hold (α₂ = m₂ − prediction, R²_oos = 1 − α₂'α₂ / m₂'m₂, T₁ + T₂ = T).
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../bin/keelson-cli';
import { compareModels, estimateLedger, holdoutPricing } from '../../lib/gmm/index';
import { boxMuller, mulberry32 } from '../../lib/gmm/random';
import { runReference } from '../gmm/helpers';

let file = '';
const T = 180;
const ASSETS = ['Alder', 'Birch', 'Cedar', 'Damson', 'Elm', 'Fir'];
const rows: number[][] = [];
const dates: string[] = [];

beforeAll(() => {
  const z = boxMuller(mulberry32(4242));
  const lines = ['date,MKT,CARRY,GROWTH,MOOD,RF,' + ASSETS.join(',')];
  for (let t = 0; t < T; t++) {
    const mkt = 0.006 + 0.04 * z();
    const carry = 0.004 + 0.025 * z() + 0.2 * mkt;
    const growth = 0.003 + 0.02 * z();
    const mood = 0.01 * z();
    const rf = 0.001 + 0.0001 * z();
    const funds = [0.7, 0.9, 1.0, 1.1, 1.2, 1.3].map((b, i) => rf + b * mkt + (0.3 * i - 0.6) * carry + 0.2 * (i - 2) * growth + 0.015 * z());
    const vals = [mkt, carry, growth, mood, rf, ...funds].map((v) => Number(v.toFixed(8)));
    rows.push(vals);
    const d = `${1990 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`;
    dates.push(d);
    lines.push([d, ...vals].join(','));
  }
  file = join(mkdtempSync(join(tmpdir(), 'keelson-cli-mc-')), 'library.csv');
  writeFileSync(file, lines.join('\n') + '\n');
});

async function cli(args: string[]) {
  let out = '';
  let err = '';
  const code = await main(['estimate', '--data', file, '--rf', 'RF', '--assets', ASSETS.join(','), ...args], { out: (s) => (out += s), err: (s) => (err += s) });
  return { code, out, err };
}
const col = (name: string) => ['MKT', 'CARRY', 'GROWTH', 'MOOD', 'RF'].indexOf(name);
const factorRows = (names: string[]) => rows.map((r) => names.map((n) => r[col(n)]));
const returns = () => rows.map((r) => r.slice(5).map((v) => v - r[4]));

describe('estimate --versus', () => {
  it('non-nested: comparison.sharpe equals lib/gmm compareModels on the same factors; shared factor named; text output shows it', async () => {
    const r = await cli(['--factors', 'MKT,CARRY', '--versus', 'MKT,GROWTH', '--json']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const c = j.comparison;
    expect(c.versus).toEqual(['MKT', 'GROWTH']);
    const direct = compareModels({ factors: factorRows(['MKT', 'CARRY', 'GROWTH']), factorNames: ['MKT', 'CARRY', 'GROWTH'], traded: [true, true, true], lags: j.lags, modelA: ['MKT', 'CARRY'], modelB: ['MKT', 'GROWTH'] });
    if (!direct.ok || direct.kind !== 'sharpe') throw new Error('sharpe expected');
    expect(c.sharpe.a.theta).toBeCloseTo(direct.a.theta, 14);
    expect(c.sharpe.b.theta).toBeCloseTo(direct.b.theta, 14);
    expect(c.sharpe.se).toBeCloseTo(direct.se, 14);
    expect(c.sharpe.z).toBeCloseTo(direct.z, 12);
    expect(c.sharpe.p).toBeCloseTo(direct.p, 12);
    expect(c.sharpe.shared).toEqual(['MKT']);
    expect(c.sharpeSpanning).toBeNull();
    expect(c.nested).toEqual({ nested: false, reason: 'Neither factor set contains the other.', dropped: [], test: null });
    // the test assets stay the same: the versus factor is not taken as an asset
    expect(j.N).toBe(6);
    const text = await cli(['--factors', 'MKT,CARRY', '--versus', 'MKT,GROWTH']);
    expect(text.code).toBe(0);
    expect(text.out).toMatch(/Model comparison: A = MKT, CARRY {2}versus {2}B = MKT, GROWTH/);
    expect(text.out).toMatch(/z −?\d+\.\d\d {3}p /);
    expect(text.out).toMatch(/shared factors: MKT/);
  });

  it('nested: no z test; the joint spanning test and the drop test, equal to the larger ledger’s own drop test of the extra factor (identity)', async () => {
    const r = await cli(['--factors', 'MKT,CARRY', '--versus', 'MKT', '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const c = j.comparison;
    expect(c.sharpe).toBeNull();
    expect(c.sharpeSpanning.factors).toEqual(['CARRY']);
    expect(c.sharpeSpanning.on).toEqual(['MKT']);
    expect(c.sharpeSpanning.reason).toMatch(/nested/);
    expect(c.nested.nested).toBe(true);
    expect(c.nested.dropped).toEqual(['CARRY']);
    const carry = j.factors.find((f: { name: string }) => f.name === 'CARRY');
    expect(c.nested.test.stat).toBeCloseTo(carry.chi2Drop.stat, 10);
    expect(c.nested.test.p).toBeCloseTo(carry.chi2Drop.p, 10);
    // and the spanning statistic is the ledger's single spanning check of CARRY (t²)
    expect(c.sharpeSpanning.stat).toBeCloseTo(carry.spanning.t ** 2, 10);
  });

  it('a non-traded factor: the comparison says why there is no Sharpe test; a bad column is a one-line refusal (exit 2)', async () => {
    const r = await cli(['--factors', 'MKT,CARRY', '--versus', 'MKT,MOOD', '--non-traded', 'MOOD', '--json']);
    expect(r.code).toBe(0);
    const c = JSON.parse(r.out).comparison;
    expect(c.sharpe).toBeNull();
    expect(c.sharpeRefusal.message).toMatch(/'MOOD' is not a traded factor/);
    const bad = await cli(['--factors', 'MKT', '--versus', 'NOPE']);
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/^keelson: --versus: column "NOPE" is not in /);
    expect(bad.err.trim().split('\n')).toHaveLength(1);
    const asset = await cli(['--factors', 'MKT', '--versus', 'Alder']);
    expect(asset.code).toBe(2);
    expect(asset.err).toMatch(/"Alder" is a test asset/);
  });
});

describe('estimate --holdout-from', () => {
  it('returns holdout { T, r2, meanAbsAlpha, alpha } equal to lib/gmm holdoutPricing split at that month; the identities hold', async () => {
    const r = await cli(['--factors', 'MKT,CARRY', '--holdout-from', '2002-07', '--json']);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    const h = JSON.parse(r.out).holdout;
    const s = dates.indexOf('2002-07');
    expect(h.T1).toBe(s);
    expect(h.T).toBe(T - s);
    expect(h.splitDate).toBe('2002-07');
    const direct = holdoutPricing({
      returns: returns(),
      factors: factorRows(['MKT', 'CARRY']),
      factorNames: ['MKT', 'CARRY'],
      assetNames: ASSETS,
      split: { index: s },
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false },
    });
    if (!direct.ok) throw new Error('hold-out failed');
    expect(h.r2).toBeCloseTo(direct.r2oos, 10);
    expect(h.meanAbsAlpha).toBeCloseTo(direct.meanAbsAlpha, 12);
    h.alpha.forEach((a: number, i: number) => {
      expect(a).toBeCloseTo(direct.alpha[i], 12);
      expect(a).toBeCloseTo(h.holdoutMean[i] - h.predicted[i], 15);
    });
    const sse = h.alpha.reduce((x: number, a: number) => x + a * a, 0);
    const sst = h.holdoutMean.reduce((x: number, m: number) => x + m * m, 0);
    expect(h.r2).toBeCloseTo(1 - sse / sst, 12);
    const text = await cli(['--factors', 'MKT,CARRY', '--holdout-from', '2002-07-15']);
    expect(text.out).toMatch(/Hold-out check from 2002-07: b estimated on 150 periods, 30 periods priced/);
    expect(text.out).toMatch(/R²_oos /);
  });

  it('refuses a date outside the sample, a split leaving fewer than N + K + 1 periods, and a malformed date (exit 2, one line)', async () => {
    for (const [from, msg] of [
      ['1980-01', /outside the sample \(1990-01 – 2004-12\)/],
      ['2005-01', /outside the sample/],
      ['1990-05', /4 estimation and 176 hold-out periods; each side needs at least N \+ K \+ 1 = 9/],
      ['2004-10', /177 estimation and 3 hold-out/],
      ['2004-13', /must be a date YYYY-MM/],
    ] as const) {
      const r = await cli(['--factors', 'MKT,CARRY', '--holdout-from', from]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(msg);
      expect(r.err.trim().split('\n')).toHaveLength(1);
      expect(r.out).toBe('');
    }
  });
});

describe('estimate --json: adjusted p per factor', () => {
  it('pHolm and pBY of the b tests across the factors equal statsmodels multipletests (holm, fdr_by) on the ledger’s p', async () => {
    const r = await cli(['--factors', 'MKT,CARRY,GROWTH,MOOD', '--non-traded', 'MOOD', '--json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    const p = j.factors.map((f: { pB: number }) => f.pB);
    // statsmodels multipletests (gmm_reference.py `multipletests_task`) through a committed fixture. Its
    // input is the CLI's p rounded to 12 significant digits, so a last-bit change in lib/gmm does not
    // invalidate the fixture; rounding moves p by ≤ 5e-13 and Holm / BY are Lipschitz in p with
    // constant ≤ m·Σ1/i = 4 × 2.08 < 9, so the adjusted values agree to < 5e-12 (stated bound 1e-11).
    const p12 = p.map((x: number) => Number(x.toPrecision(12)));
    const [ref] = runReference('api-cli-multipletests', { task: 'multipletests', pvalues: [p12] }) as { holm: number[]; by: number[] }[];
    expect(ref.holm).toHaveLength(4);
    j.factors.forEach((f: { pHolm: number; pBY: number }, k: number) => {
      expect(Math.abs(f.pHolm - ref.holm[k])).toBeLessThan(1e-11);
      expect(Math.abs(f.pBY - ref.by[k])).toBeLessThan(1e-11);
    });
    expect(j.adjustedBasis).toBe('standard');
    // and the same numbers as lib/gmm's ledger on the same data
    const lib = estimateLedger({
      assetNames: ASSETS,
      returns: returns(),
      factorNames: ['MKT', 'CARRY', 'GROWTH', 'MOOD'],
      factors: factorRows(['MKT', 'CARRY', 'GROWTH', 'MOOD']),
      traded: [true, true, true, false],
      options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05, fmIntercept: false },
    });
    if (!lib.ok) throw new Error(lib.message);
    lib.ledger.factors.forEach((f, k) => expect(j.factors[k].pHolm).toBeCloseTo(f.pHolm, 12));
  });
});

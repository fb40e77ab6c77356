/**
 * Every validation error is a GmmInputError with a code and a message naming the series/row;
 * singular systems come back as typed results (never NaN).
 */
import { describe, expect, it } from 'vitest';
import { estimateSdfGmm, fitSdfGmm, GmmInputError, grsTest, longRunCovariance, prepareMoments, spanningTest, waldSingle, type LedgerInput, estimateLedger as estimateLedgerOutcome } from '../../lib/gmm/index';
import { estimateLedger, simulateEconomy, zeroCovarianceEconomy } from './helpers';

const eco = simulateEconomy({ T: 120, N: 4, K: 2, seed: 77 });
const good: LedgerInput = {
  assetNames: ['Alder', 'Birch', 'Cedar', 'Damson'],
  returns: eco.returns,
  factorNames: ['MKT', 'TILT'],
  factors: eco.factors,
  traded: [true, true],
  options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
};

function expectInputError(fn: () => unknown, code: string, message: RegExp, extra: { series?: string; row?: number } = {}) {
  let caught: unknown;
  try {
    fn();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(GmmInputError);
  const err = caught as GmmInputError;
  expect(err.code).toBe(code);
  expect(err.message).toMatch(message);
  if (extra.series !== undefined) expect(err.series).toBe(extra.series);
  if (extra.row !== undefined) expect(err.row).toBe(extra.row);
}

const withReturns = (f: (r: number[][]) => void): LedgerInput => {
  const r = eco.returns.map((row) => [...row]);
  f(r);
  return { ...good, returns: r };
};
const withFactors = (f: (r: number[][]) => void): LedgerInput => {
  const r = eco.factors.map((row) => [...row]);
  f(r);
  return { ...good, factors: r };
};

function allFinite(x: unknown): boolean {
  if (typeof x === 'number') return Number.isFinite(x);
  if (Array.isArray(x)) return x.every(allFinite);
  if (x && typeof x === 'object') return Object.values(x).every(allFinite);
  return true;
}

describe('validation errors', () => {
  it('a valid input passes and every number in the result is finite', () => {
    const r = estimateLedger(good);
    expect(allFinite(r)).toBe(true);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
  });

  it('NaN names the row and the series', () => {
    expectInputError(() => estimateLedger(withReturns((r) => (r[6][2] = NaN))), 'non-finite', /Row 7, asset 'Cedar'.*NaN/, { series: 'Cedar', row: 6 });
  });

  it('±Infinity names the row and the series', () => {
    expectInputError(() => estimateLedger(withFactors((r) => (r[10][1] = Infinity))), 'non-finite', /Row 11, factor 'TILT'.*Infinity/, { series: 'TILT', row: 10 });
    expectInputError(() => estimateLedger(withReturns((r) => (r[0][0] = -Infinity))), 'non-finite', /Row 1, asset 'Alder'/, { row: 0 });
  });

  it('a missing value (null) is named', () => {
    expectInputError(() => estimateLedger(withReturns((r) => ((r[3] as unknown[])[1] = null))), 'non-finite', /Row 4, asset 'Birch': value missing/);
  });

  it('ragged rows name the row', () => {
    expectInputError(() => estimateLedger(withReturns((r) => r[5].pop())), 'ragged-row', /Row 6 of the returns has 3 values; expected 4/, { row: 5 });
    expectInputError(() => estimateLedger(withFactors((r) => r[2].push(0.1))), 'ragged-row', /Row 3 of the factors/, { row: 2 });
  });

  it('returns and factors of different lengths', () => {
    expectInputError(() => estimateLedger({ ...good, factors: eco.factors.slice(1) }), 'length-mismatch', /120 rows but the factors have 119/);
  });

  it('names that do not match the columns, duplicates, traded flags', () => {
    expectInputError(() => estimateLedger({ ...good, assetNames: ['Alder', 'Birch', 'Cedar'] }), 'ragged-row', /expected 3/);
    expectInputError(() => estimateLedger({ ...good, assetNames: ['Alder', 'Birch', 'Alder', 'Damson'] }), 'duplicate-name', /'Alder' appears twice/);
    expectInputError(() => estimateLedger({ ...good, traded: [true] }), 'length-mismatch', /one flag per factor/);
  });

  it('T ≤ N + K is refused', () => {
    const short = { ...good, returns: eco.returns.slice(0, 6), factors: eco.factors.slice(0, 6) };
    expectInputError(() => estimateLedger(short), 'too-few-periods', /T = 6 periods is too few for N = 4 assets and K = 2 factors: need T > N \+ K = 6/);
  });

  it('a lag the data cannot support, and bad lag values', () => {
    // methods.md: L ≥ T/4 is refused, naming the largest allowed lag (29 for T = 120)
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, lags: 120 } }), 'invalid-lags', /lags = 120 is too long for T = 120 periods.*largest allowed lag is 29/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, lags: 30 } }), 'invalid-lags', /lags = 30 .*largest allowed lag is 29/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, lags: -1 } }), 'invalid-lags', /integer ≥ 0/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, lags: 2.5 } }), 'invalid-lags', /got 2.5/);
    expectInputError(() => longRunCovariance([[1], [2]], { lags: 2 }), 'invalid-lags', /from 0 to 1/);
  });

  it('bad options name the option', () => {
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, stage: 'third' as never } }), 'invalid-option', /stage must be first, second or iterated; got 'third'/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, level: 5 } }), 'invalid-option', /level must be a number strictly between 0 and 1; got 5/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, weighting: 'none' as never } }), 'invalid-option', /weighting/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, form: 'odd' as never } }), 'invalid-option', /form/);
    expectInputError(() => estimateLedger({ ...good, options: { ...good.options, dropSet: ['HML'] } }), 'unknown-factor', /dropSet names 'HML'/, { series: 'HML' });
  });

  it('a constant series is named (asset and factor)', () => {
    expectInputError(() => estimateLedger(withReturns((r) => r.forEach((row) => (row[1] = 0.004)))), 'constant-series', /asset 'Birch' is constant/, { series: 'Birch' });
    expectInputError(() => estimateLedger(withFactors((r) => r.forEach((row) => (row[0] = 0.01)))), 'constant-series', /factor 'MKT' is constant/, { series: 'MKT' });
  });

  it('an asset that is a linear combination of the others is named', () => {
    expectInputError(
      () => estimateLedger(withReturns((r) => r.forEach((row) => (row[3] = 0.5 * row[0] + 0.5 * row[2])))),
      'collinear-asset',
      /asset 'Damson' is an exact linear combination of 'Alder', 'Cedar'/,
      { series: 'Damson' },
    );
  });

  it('a duplicated factor is named', () => {
    expectInputError(
      () => estimateLedger(withFactors((r) => r.forEach((row) => (row[1] = row[0])))),
      'collinear-factor',
      /factor 'TILT' is an exact linear combination of 'MKT'/,
      { series: 'TILT' },
    );
  });

  it('spanning and GRS refuse a non-traded factor, naming it', () => {
    expectInputError(
      () => spanningTest({ factors: eco.factors, factorNames: ['MKT', 'GROWTH'], traded: [true, false], lags: 0, test: ['GROWTH'] }),
      'not-traded',
      /'GROWTH' is not traded; the spanning check applies to traded factors only/,
      { series: 'GROWTH' },
    );
    expectInputError(
      () => grsTest({ returns: eco.returns, factors: eco.factors, factorNames: ['MKT', 'GROWTH'], traded: [true, false] }),
      'not-traded',
      /GRS test needs every factor traded; 'GROWTH' is not/,
    );
    // in the ledger a non-traded factor simply gets no spanning/GRS, with a warning
    const r = estimateLedger({ ...good, traded: [true, false] });
    expect(r.factors[1].spanning).toBeNull();
    expect(r.grs).toBeNull();
    expect(r.warnings.map((w) => w.message).join(' ')).toMatch(/GRS is not reported/);
    expect(r.warnings.find((w) => /GRS is not reported/.test(w.message))?.code).toBe('grs-not-traded');
  });

  it('empty input', () => {
    expectInputError(() => estimateLedger({ ...good, returns: [], factors: [] }), 'empty-input', /returns are empty/);
    expectInputError(() => estimateSdfGmm({ returns: [[]], factors: [[1]], options: { stage: 'first', lags: 0 } }), 'empty-input', /returns are empty/);
  });
});

describe('singular systems give typed results, never NaN', () => {
  // A factor with exactly zero covariance with every asset: returns repeat in pairs of periods
  // while the factor alternates +1/−1 around its mean, so Cov(R, f₂) = 0 exactly and C'WC is
  // singular.
  const { returns, factors } = zeroCovarianceEconomy();

  it('fitSdfGmm returns { ok: false, reason: "singular" }', () => {
    const fit = fitSdfGmm(prepareMoments(returns, factors), { stage: 'second', lags: 1 });
    expect(fit.ok).toBe(false);
    if (!fit.ok) {
      expect(fit.code).toBe('singular');
      expect(fit.message).toMatch(/singular/);
    }
  });

  it('estimateLedger returns a typed failure (code singular, the matrix named), not NaN and not a throw', () => {
    const r = estimateLedgerOutcome({ ...good, assetNames: ['A', 'B', 'C'], returns, factors, options: { ...good.options, lags: 1 } });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.code).toBe('singular');
    expect(r.matrix).toBeTruthy();
    expect(r.message).toMatch(/singular/);
  });

  it('second-moment weighting with a singular E[RR\'] is a typed failure', () => {
    const dup = eco.returns.map((r) => [r[0], r[0], r[1]]);
    const fit = fitSdfGmm(prepareMoments(dup, eco.factors), { stage: 'first', weighting: 'second-moment', lags: 0 });
    expect(fit.ok).toBe(false);
  });

  it('iterated GMM that hits its cap reports converged: false with the last iterate (typed, finite)', () => {
    const e = simulateEconomy({ T: 200, N: 6, K: 2, seed: 9 });
    const fit = fitSdfGmm(prepareMoments(e.returns, e.factors), { stage: 'iterated', lags: 2, maxIterations: 2, tolerance: 1e-300 });
    expect(fit.ok).toBe(true);
    if (fit.ok) {
      expect(fit.converged).toBe(false);
      expect(fit.iterations).toBe(2);
      expect(allFinite(Array.from(fit.b))).toBe(true);
      expect(allFinite(Array.from(fit.covB))).toBe(true);
      expect(Number.isFinite(fit.J.stat)).toBe(true);
    }
  });

  it('a zero standard error gives t = 0 and p = 1, not NaN', () => {
    expect(waldSingle(0.3, 0)).toEqual({ estimate: 0.3, se: 0, t: 0, p: 1 });
  });
});

/**
 * The changed lines of the methods contract (/work/shared/methods.md): relative iteration stop
 * (scale invariance), lag limits (L ≥ T/4 refused, L > 2·T^(1/3) warned; Andrews 1991), N < K
 * refused before any covariance is computed, N = K reported with exact zeros, the drop test at
 * the first stage, the verdict basis, and the small-sample caution.
 */
import { describe, expect, it } from 'vitest';
import { cautionText, dropTester, estimateSdfGmm, fitSdfGmm, GmmInputError, LARGE_LAG_FIGURES, maxLag, prepareMoments, SMALL_SAMPLE_FIGURES, subsetSweep, type LedgerInput, type LedgerOptions } from '../../lib/gmm/index';
import { spdInverse } from '../../lib/gmm/linalg';
import { estimateLedger, maxRel, okOf, simulateEconomy } from './helpers';

const opts: LedgerOptions = { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 };

function ledgerInput(T: number, N: number, K: number, seed: number, options: Partial<LedgerOptions> = {}, alphaScale?: number): LedgerInput {
  const eco = simulateEconomy({ T, N, K, seed, ...(alphaScale !== undefined ? { alphaScale } : {}) });
  return {
    assetNames: Array.from({ length: N }, (_, i) => `Fund ${i + 1}`),
    returns: eco.returns,
    factorNames: Array.from({ length: K }, (_, k) => `F${k + 1}`),
    factors: eco.factors,
    traded: Array.from({ length: K }, () => true),
    options: { ...opts, ...options },
  };
}

function caught(fn: () => unknown): GmmInputError {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(GmmInputError);
    return e as GmmInputError;
  }
  throw new Error('expected a GmmInputError');
}

describe('iterated GMM stops relative to |b| (methods.md "Iterated")', () => {
  // Scaling returns and factors by c scales C by c², E[R] by c and b by 1/c; t, J and the
  // verdicts are unit-free. With an absolute stop (|Δb| < 1e-10) the iteration count would
  // depend on c; with the relative stop it must not.
  for (const form of ['centred', 'uncentred'] as const)
    it(`${form}: data scaled by 1e6 and 1e-6 give the same verdicts, t and J (1e-8 relative) and iteration count`, () => {
      const base = ledgerInput(500, 8, 3, 61, { stage: 'iterated', lags: 3, form });
      const ref = estimateLedger(base);
      expect(ref.converged).toBe(true);
      expect(ref.iterations).toBeGreaterThan(2);
      for (const c of [1e6, 1e-6]) {
        const scaled = estimateLedger({
          ...base,
          returns: base.returns.map((r) => r.map((v) => v * c)),
          factors: base.factors.map((f) => f.map((v) => v * c)),
        });
        expect(scaled.iterations).toBe(ref.iterations);
        expect(scaled.converged).toBe(true);
        expect(maxRel(scaled.J.stat, ref.J.stat, `J scaled ${c}`)).toBeLessThan(1e-8);
        expect(maxRel(scaled.factors.map((f) => f.tB), ref.factors.map((f) => f.tB), `tB scaled ${c}`)).toBeLessThan(1e-8);
        expect(maxRel(scaled.factors.map((f) => f.tLambda), ref.factors.map((f) => f.tLambda), `tLambda scaled ${c}`)).toBeLessThan(1e-8);
        expect(maxRel(scaled.factors.map((f) => f.b * c), ref.factors.map((f) => f.b), `b·c scaled ${c}`)).toBeLessThan(1e-8);
        expect(scaled.factors.map((f) => f.verdict)).toEqual(ref.factors.map((f) => f.verdict));
      }
    });
});

describe('lag limits (methods.md "Long-run covariance")', () => {
  it('L ≥ T/4 is refused with invalid-lags naming the largest allowed lag; L = ⌈T/4⌉ − 1 runs', () => {
    const inp = ledgerInput(120, 4, 2, 5);
    expect(maxLag(120)).toBe(29);
    expect(maxLag(121)).toBe(30);
    const e = caught(() => estimateLedger({ ...inp, options: { ...inp.options, lags: 30 } }));
    expect(e.code).toBe('invalid-lags');
    expect(e.message).toMatch(/lags = 30 is too long for T = 120 periods.*largest allowed lag is 29/);
    expect(estimateLedger({ ...inp, options: { ...inp.options, lags: 29 } }).lags).toBe(29);
    // the subset sweep follows the same rule
    const s = caught(() =>
      subsetSweep({ returns: inp.returns, factors: inp.factors, factorNames: ['F1', 'F2'], options: { lags: 30, form: 'centred', weighting: 'identity', factorMeansKnown: false } }),
    );
    expect(s.code).toBe('invalid-lags');
    expect(s.message).toMatch(/largest allowed lag is 29/);
  });

  it('L > 2·T^(1/3) gives lagWarning with the numbers (Andrews 1991); the default lag does not', () => {
    const inp = ledgerInput(240, 5, 2, 6);
    const ok = estimateLedger(inp);
    expect(ok.lags).toBe(4);
    expect(ok.lagWarning).toBeNull();
    // 2·240^(1/3) = 12.43: L = 12 is allowed silently, 13 warns
    expect(estimateLedger({ ...inp, options: { ...inp.options, lags: 12 } }).lagWarning).toBeNull();
    const r = estimateLedger({ ...inp, options: { ...inp.options, lags: 13 } });
    expect(r.lagWarning).toMatch(/L = 13 exceeds 2·T\^\(1\/3\) = 12\.4 for T = 240/);
    expect(r.lagWarning).toMatch(/at most 12/);
    // a long lag also earns the caution with the simulated figures (bench/robust.bench.ts table 3)
    expect(r.caution).toMatch(new RegExp(`rejected a true null ${Math.round(100 * LARGE_LAG_FIGURES.waldRejection)}%`));
  });
});

describe('test assets versus factors', () => {
  it('N < K is refused before any covariance: too-few-assets, "fewer test assets than factors", N and K named', () => {
    const eco = simulateEconomy({ T: 200, N: 2, K: 3, seed: 8 });
    const e = caught(() =>
      estimateLedger({ assetNames: ['A', 'B'], returns: eco.returns, factorNames: ['F1', 'F2', 'F3'], factors: eco.factors, traded: [true, true, true], options: opts }),
    );
    expect(e.code).toBe('too-few-assets');
    expect(e.message).toMatch(/fewer test assets than factors/);
    expect(e.message).toMatch(/N = 2 .*K = 3/);
    expect(e.message).not.toMatch(/covariance/);
    // also for the plain-array estimator, even with factors that would fail later checks
    const e2 = caught(() => estimateSdfGmm({ returns: eco.returns, factors: eco.factors.map((f) => [f[0], f[0], f[1]]), options: { stage: 'first', lags: 0 } }));
    expect(e2.code).toBe('too-few-assets');
  });

  it('N = K (exactly identified) gives pricing errors and SEs of exactly 0 and J = 0 at every stage (Hansen 1982 identity)', () => {
    for (const stage of ['first', 'second', 'iterated'] as const)
      for (const weighting of ['identity', 'second-moment', 'covariance'] as const) {
        const r = estimateLedger(ledgerInput(300, 3, 3, 9, { stage, weighting, lags: 2 }, 0.01));
        for (const p of r.pricingErrors) {
          expect(p.alpha).toBe(0);
          expect(p.se).toBe(0);
          expect(p.t).toBe(0);
          expect(p.predicted).toBe(p.meanReturn);
        }
        expect(r.J).toEqual({ stat: 0, df: 0, p: 1 });
        expect(r.hj).toBe(0);
        if (stage === 'first') for (const f of r.factors) expect(maxRel(f.robust!.seB, f.seB)).toBeLessThan(1e-10);
      }
  });
});

describe('drop test at the first stage (methods.md drop test 2)', () => {
  it('per-factor and joint drop tests are reported, with W* = Ŝ⁻¹ at the first-stage b̂ (same lag)', () => {
    const inp = ledgerInput(400, 8, 3, 12, { stage: 'first', lags: 3, dropSet: ['F2', 'F3'] });
    const r = estimateLedger(inp);
    const m = prepareMoments(inp.returns, inp.factors);
    const fit = fitSdfGmm(m, { stage: 'first', lags: 3 });
    if (!fit.ok) throw new Error('fit failed');
    // the second stage computed from the first: its weighting is exactly that W*
    const second = fitSdfGmm(m, { stage: 'second', lags: 3 });
    if (!second.ok) throw new Error('fit failed');
    const Wstar = spdInverse(fit.Sb, 8)!;
    expect(maxRel(Wstar, second.W)).toBeLessThan(1e-12);
    const drop = dropTester({ T: 400, N: 8, K: 3, X: fit.X, W: Wstar, meanR: m.meanR });
    r.factors.forEach((f, k) => {
      expect(f.chi2Drop).not.toBeNull();
      expect(maxRel(f.chi2Drop!.stat, okOf(drop([k])).stat)).toBeLessThan(1e-12);
    });
    expect(maxRel(r.jointDrop!.chi2Drop!.stat, okOf(drop([1, 2])).stat)).toBeLessThan(1e-12);
    // and they equal the drop tests of the second-stage run on the same data
    const r2 = estimateLedger({ ...inp, options: { ...inp.options, stage: 'second' } });
    r.factors.forEach((f, k) => expect(maxRel(f.chi2Drop!.stat, r2.factors[k].chi2Drop!.stat)).toBeLessThan(1e-10));
    expect(r.warnings.map((w) => w.message).join(' ')).toMatch(/first-stage run use the second stage computed from it/);
  });
});

describe('verdict basis (glossary: standard / robust / bootstrap)', () => {
  const first = ledgerInput(300, 8, 2, 14, { stage: 'first', lags: 2 }, 0.01);
  it('first stage: default basis robust; the headline verdict is the robust one', () => {
    const r = estimateLedger(first);
    expect(r.basis).toBe('robust');
    expect(r.verdictBasis).toBe('robust');
    expect(r.options.basis).toBe('robust');
    for (const f of r.factors) {
      expect(f.robust).not.toBeNull();
      expect(f.verdicts.robust).not.toBeNull();
      expect(f.verdict).toBe(f.verdicts.robust);
    }
  });
  it('first stage, basis standard: the standard verdict heads, robust shown beside', () => {
    const r = estimateLedger({ ...first, options: { ...first.options, basis: 'standard' } });
    expect(r.verdictBasis).toBe('standard');
    for (const f of r.factors) {
      expect(f.verdict).toBe(f.verdicts.standard);
      expect(f.robust).not.toBeNull();
    }
  });
  it('basis bootstrap before the bootstrap is merged: robust for a first-stage run, standard otherwise', () => {
    const boot = { draws: 99, scheme: 'iid', seed: 1 } as const;
    const r = estimateLedger({ ...first, options: { ...first.options, basis: 'bootstrap', bootstrap: boot } });
    expect(r.basis).toBe('bootstrap');
    expect(r.verdictBasis).toBe('robust');
    for (const f of r.factors) expect(f.verdict).toBe(f.verdicts.robust);
    const r2 = estimateLedger({ ...first, options: { ...first.options, stage: 'second', basis: 'bootstrap', bootstrap: boot } });
    expect(r2.verdictBasis).toBe('standard');
    for (const f of r2.factors) {
      expect(f.robust).toBeNull();
      expect(f.verdicts.robust).toBeNull();
      expect(f.verdict).toBe(f.verdicts.standard);
    }
    expect(r2.robustNote).toMatch(/not available for a second-stage run/);
  });
});

describe('small-sample caution', () => {
  it('T < 10·N: the caution quotes the simulated figures of bench/robust.bench.ts and points to the bootstrap basis', () => {
    const r = estimateLedger(ledgerInput(120, 25, 2, 15));
    const s = SMALL_SAMPLE_FIGURES;
    expect(r.caution).toContain('T = 120 is below 10·N = 250');
    expect(r.caution).toContain(`T = ${s.T}, N = ${s.N}`);
    expect(r.caution).toContain(`rejected a true null ${Math.round(100 * s.waldRejection)}% of the time`);
    expect(r.caution).toMatch(/bootstrap basis/);
    expect(r.caution).toBe(cautionText(120, 25, r.lags));
    // the free-text warnings keep their T < 10·N line
    expect(r.warnings.map((w) => w.message).join(' ')).toMatch(/T < 10·N/);
    expect(r.warnings.find((w) => /T < 10·N/.test(w.message))?.code).toBe('small-sample');
  });
  it('T ≥ 10·N with the default lag: no caution', () => {
    expect(estimateLedger(ledgerInput(300, 8, 2, 16)).caution).toBeNull();
    expect(cautionText(250, 25, 4)).toBeNull();
  });
});

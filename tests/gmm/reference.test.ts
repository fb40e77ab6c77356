/**
 * Agreement with an independent Python reference (tests/reference/gmm_reference.py: numpy,
 * scipy and statsmodels from Debian, written from the formulas in methods.md) on the same seeded
 * invented data, to 1e-8 relative.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { fitPremia, fitSdfGmm, hacCovariance, olsFit, prepareMoments, type LedgerOptions } from '../../lib/gmm/index';
import { disagreement, estimateLedger, maxRel, runReference, simulateEconomy } from './helpers';

const TOL = 1e-8;

interface Case {
  name: string;
  T: number;
  N: number;
  K: number;
  seed: number;
  traded: boolean[];
  options: LedgerOptions & { lags: number };
  dropSets: number[][];
  jointSpanning?: number[];
}

const cases: Case[] = [
  {
    name: 'centred, second stage, identity first stage, L = 3',
    T: 400, N: 10, K: 3, seed: 11, traded: [true, true, true],
    options: { stage: 'second', weighting: 'identity', lags: 3, form: 'centred', factorMeansKnown: false, level: 0.05, fmIntercept: false },
    dropSets: [[0], [1], [2], [1, 2]], jointSpanning: [1, 2],
  },
  {
    name: 'centred, iterated, second-moment first stage, L = 5, one non-traded factor',
    T: 600, N: 12, K: 2, seed: 22, traded: [true, false],
    options: { stage: 'iterated', weighting: 'second-moment', lags: 5, form: 'centred', factorMeansKnown: false, level: 0.05, fmIntercept: true },
    dropSets: [[0], [1]],
  },
  {
    name: 'centred, first stage (pseudo-inverse J), L = 2',
    T: 300, N: 8, K: 2, seed: 33, traded: [true, true],
    options: { stage: 'first', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, level: 0.05, fmIntercept: true },
    dropSets: [[0], [1]],
  },
  {
    name: 'uncentred, second stage, L = 4',
    T: 500, N: 9, K: 3, seed: 44, traded: [true, true, true],
    options: { stage: 'second', weighting: 'identity', lags: 4, form: 'uncentred', factorMeansKnown: false, level: 0.05 },
    dropSets: [[0], [1], [2], [0, 2]],
  },
  {
    name: 'centred, factor means known, second stage, White (L = 0)',
    T: 350, N: 6, K: 2, seed: 55, traded: [true, true],
    options: { stage: 'second', weighting: 'identity', lags: 0, form: 'centred', factorMeansKnown: true, level: 0.05 },
    dropSets: [[0], [1]],
  },
];

afterAll(() => {
  // Printed for the report: the largest relative disagreement with the reference.
  console.log(`largest relative disagreement with the Python reference: ${disagreement.max.toExponential(2)} (${disagreement.where})`);
});

const economies = cases.map((c) => simulateEconomy({ T: c.T, N: c.N, K: c.K, seed: c.seed }));
// one Python process for every case (statsmodels takes ~2 s of CPU to import)
const references = runReference(
  'reference',
  cases.map((c, i) => ({
    returns: economies[i].returns,
    factors: economies[i].factors,
    traded: c.traded,
    lags: c.options.lags,
    stage: c.options.stage,
    weighting: c.options.weighting,
    form: c.options.form,
    factorMeansKnown: c.options.factorMeansKnown,
    fmIntercept: c.options.fmIntercept ?? false,
    dropSets: c.dropSets,
    jointSpanning: c.jointSpanning,
  })),
);

describe.each(cases.map((c, i) => ({ ...c, i })))('Python reference: $name', (c) => {
  const eco = economies[c.i];
  const ref = references[c.i];
  const assetNames = eco.returns[0].map((_, i) => `P${i + 1}`);
  const factorNames = eco.factors[0].map((_, k) => `F${k + 1}`);
  const m = prepareMoments(eco.returns, eco.factors);
  const fit = fitSdfGmm(m, { ...c.options });
  if (!fit.ok) throw new Error('fit failed');
  const ledger = estimateLedger({ assetNames, returns: eco.returns, factorNames, factors: eco.factors, traded: c.traded, options: c.options });
  const g = ref.gmm;

  it('HAC of the returns equals the Γ_j sum and statsmodels S_hac_simple (numpy/statsmodels)', () => {
    const R = m.R;
    const S = hacCovariance(R, c.T, c.N, c.options.lags);
    expect(maxRel(S, ref.hacSelf, 'hac vs numpy Γ_j')).toBeLessThan(TOL);
    expect(maxRel(S, ref.hacStatsmodels, 'hac vs statsmodels')).toBeLessThan(TOL);
    const Sd = hacCovariance(R, c.T, c.N, c.options.lags, true);
    expect(maxRel(Sd, ref.hacDemeaned, 'hac demeaned')).toBeLessThan(TOL);
  });

  it('time-series OLS with classical and HAC SEs against statsmodels OLS (cov_type=HAC, use_correction=False)', () => {
    const y = eco.returns.map((r) => r[0]);
    const X = eco.factors.map((f) => [1, ...f]);
    const hac = olsFit(y, X, { covariance: 'hac', lags: c.options.lags });
    const cls = olsFit(y, X);
    if (!hac.ok || !cls.ok) throw new Error('ols failed');
    expect(maxRel(hac.coef, ref.olsHac.params, 'ols coef')).toBeLessThan(TOL);
    expect(maxRel(hac.se, ref.olsHac.bse, 'ols HAC se')).toBeLessThan(TOL);
    expect(maxRel(cls.se, ref.olsClassical.bse, 'ols classical se')).toBeLessThan(TOL);
    expect(maxRel(cls.rSquared, ref.olsClassical.rsquared, 'ols R2')).toBeLessThan(TOL);
  });

  it('b̂ (first stage and reported), iterations, Var(b̂) through the influence function (numpy)', () => {
    expect(maxRel(fit.bFirst, g.bFirst, 'b first stage')).toBeLessThan(TOL);
    expect(maxRel(fit.b, g.b, 'b')).toBeLessThan(TOL);
    expect(fit.iterations).toBe(g.iterations);
    expect(fit.converged).toBe(g.converged);
    expect(maxRel(fit.covB, g.covB, 'Var(b) = LRV(psi_b)/T')).toBeLessThan(TOL);
    expect(maxRel(fit.covB, g.covBFromS, 'Var(b) = H S H\'/T')).toBeLessThan(TOL);
    expect(maxRel(ledger.factors.map((f) => f.b), g.b, 'ledger b')).toBeLessThan(TOL);
  });

  it('pricing errors and their covariance, J (numpy/scipy)', () => {
    expect(maxRel(fit.alpha, g.alpha, 'alpha')).toBeLessThan(TOL);
    expect(maxRel(fit.covAlpha, g.covAlpha, 'Var(alpha)')).toBeLessThan(TOL);
    expect(maxRel(fit.J.stat, g.J, 'J')).toBeLessThan(TOL);
    expect(fit.J.df).toBe(g.Jdf);
    expect(Math.abs(fit.J.p - g.Jp)).toBeLessThan(1e-9);
    expect(maxRel(ledger.pricingErrors.map((p) => p.se), g.covAlpha.map((r: number[], i: number) => Math.sqrt(r[i])), 'alpha se')).toBeLessThan(TOL);
  });

  it('λ̂ and Var(λ̂) accounting for Σ̂_f (numpy)', () => {
    const prem = fitPremia(m, fit);
    if (!prem.ok) throw new Error('premia failed');
    expect(maxRel(prem.lambda, g.lambda, 'lambda')).toBeLessThan(TOL);
    expect(maxRel(prem.covLambda, g.covLambda, 'Var(lambda)')).toBeLessThan(TOL);
    expect(maxRel(ledger.factors.map((f) => f.seLambda), g.covLambda.map((r: number[], i: number) => Math.sqrt(r[i])), 'se lambda')).toBeLessThan(TOL);
  });

  it('Wald tests on b and χ² drop tests with the common weighting (numpy/scipy)', () => {
    const single = c.dropSets.filter((s) => s.length === 1);
    for (const [j, s] of c.dropSets.entries()) {
      if (s.length === 1) {
        const f = ledger.factors[s[0]];
        expect(maxRel(f.tB ** 2, g.walds[j].stat, `wald ${s}`)).toBeLessThan(TOL);
        // first stage too (methods.md changed): W* = Ŝ⁻¹ with Ŝ at the first-stage b̂
        expect(maxRel(f.chi2Drop!.stat, g.drops[j].stat, `drop ${s}`)).toBeLessThan(TOL);
        expect(Math.abs(f.chi2Drop!.p - g.drops[j].p)).toBeLessThan(1e-9);
      }
    }
    expect(single.length).toBe(c.K);
    const joint = c.dropSets.findIndex((s) => s.length > 1);
    if (joint >= 0) {
      const names = c.dropSets[joint].map((k) => `F${k + 1}`);
      const lj = estimateLedger({
        assetNames, returns: eco.returns, factorNames, factors: eco.factors, traded: c.traded,
        options: { ...c.options, dropSet: names },
      });
      expect(maxRel(lj.jointDrop!.wald!.stat, g.walds[joint].stat, 'joint wald')).toBeLessThan(TOL);
      expect(maxRel(lj.jointDrop!.chi2Drop!.stat, g.drops[joint].stat, 'joint drop')).toBeLessThan(TOL);
    }
  });

  it('spanning checks against statsmodels OLS with HAC (use_correction=False)', () => {
    for (let k = 0; k < c.K; k++) {
      const f = ledger.factors[k];
      if (!c.traded[k]) {
        expect(f.spanning).toBeNull();
        continue;
      }
      expect(maxRel(f.spanning!.alpha, ref.spanning[k].alpha, 'spanning alpha')).toBeLessThan(TOL);
      expect(maxRel(f.spanning!.se, ref.spanning[k].se, 'spanning se')).toBeLessThan(TOL);
    }
    if (c.jointSpanning) {
      const names = c.jointSpanning.map((k) => `F${k + 1}`);
      const lj = estimateLedger({
        assetNames, returns: eco.returns, factorNames, factors: eco.factors, traded: c.traded,
        options: { ...c.options, dropSet: names },
      });
      expect(maxRel(lj.jointSpanning!.alpha, ref.jointSpanning.alpha, 'joint spanning alpha')).toBeLessThan(TOL);
      expect(maxRel(lj.jointSpanning!.stat, ref.jointSpanning.stat, 'joint spanning stat')).toBeLessThan(TOL);
    }
  });

  it('thin-beta statistics, HAC series under the null (no subtraction of Ĉ_k; numpy)', () => {
    for (let k = 0; k < c.K; k++) {
      const tb = ledger.factors[k].thinBeta!;
      expect(maxRel(tb.stat, ref.thinBeta[k].stat, 'thin beta')).toBeLessThan(TOL);
      expect(Math.abs(tb.p - ref.thinBeta[k].p)).toBeLessThan(1e-9);
      expect(tb.flag).toBe(ref.thinBeta[k].p >= 0.1);
    }
  });

  it('HJ distance (numpy)', () => {
    expect(maxRel(ledger.hj!, g.hj, 'hj')).toBeLessThan(TOL);
  });

  it('GRS against statsmodels time-series OLS residuals and scipy F', () => {
    if (!c.traded.every(Boolean)) {
      expect(ledger.grs).toBeNull();
      return;
    }
    expect(maxRel(ledger.grs!.stat, ref.grs.stat, 'grs')).toBeLessThan(TOL);
    expect(ledger.grs!.df2).toBe(ref.grs.df2);
    expect(Math.abs(ledger.grs!.p - ref.grs.p)).toBeLessThan(1e-9);
  });

  it('Fama–MacBeth with the Shanken correction (numpy lstsq per period)', () => {
    const fm = ledger.famaMacBeth!;
    const lam = [...(fm.zeroBeta ? [fm.zeroBeta.lambda] : []), ...fm.factors.map((f) => f.lambda)];
    const se = [...(fm.zeroBeta ? [fm.zeroBeta.se] : []), ...fm.factors.map((f) => f.se)];
    const seSh = [...(fm.zeroBeta ? [fm.zeroBeta.seShanken] : []), ...fm.factors.map((f) => f.seShanken)];
    expect(maxRel(lam, ref.famaMacBeth.lambda, 'fm lambda')).toBeLessThan(TOL);
    expect(maxRel(se, ref.famaMacBeth.se, 'fm se')).toBeLessThan(TOL);
    expect(maxRel(seSh, ref.famaMacBeth.seShanken, 'fm se shanken')).toBeLessThan(TOL);
  });
});

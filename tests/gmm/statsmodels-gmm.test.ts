/**
 * Outside check of the core GMM statistics (b̂, J, Var(b̂) at lag 0 and lag > 0, first, second and
 * iterated stage) against statsmodels' own GMM classes (statsmodels.sandbox.regression.gmm
 * LinearIVGMM, Debian python3-statsmodels; script tests/reference/statsmodels_gmm.py), not against
 * this project's numpy scripts. Values come from the committed fixture
 * tests/fixtures/statsmodels-gmm.json (regenerated and compared by npm run fixtures:check).
 *
 * The SDF moment E[R_t(1 − x_t'b)] = 0 is statsmodels' linear IV moment E[z_t(y_t − x_t'b)] with
 * y_t = 1 and z_t = R_t; x_t = f_t (uncentred form) or f_t − f̄ (centred form, factor means known,
 * where Keelson's X = Cov_T(R, f) = E_T[R (f − f̄)']). The factor-mean-corrected centred form has no
 * statsmodels counterpart; it is checked against the numpy reference in reference.test.ts and
 * audit.test.ts.
 *
 * Tolerances: b̂, Var(b̂) and J are closed-form linear algebra on both sides (normal equations
 * solved by pinv there, Cholesky here; the same number of weighting updates), so they agree to the
 * rounding of small, well-conditioned systems: 2^16 ε ≈ 1.5e-11 relative (measured worst 8.5e-13);
 * iterated GMM 2^20 ε, J's p-value 100 times the tolerance (scipy's chi2.sf there).
 */
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { fitSdfGmm, prepareMoments, type GmmStage } from '../../lib/gmm/index';
import { disagreement, maxRel, pythonFixture, REFERENCE_DIR, simulateEconomy } from './helpers';

interface Case {
  readonly name: string;
  readonly T: number;
  readonly N: number;
  readonly K: number;
  readonly seed: number;
  readonly form: 'uncentred' | 'centred-known';
  readonly stage: GmmStage;
  readonly lags: number;
}

const cases: readonly Case[] = [
  { name: 'uncentred, first stage, L = 0', T: 400, N: 10, K: 3, seed: 71, form: 'uncentred', stage: 'first', lags: 0 },
  { name: 'uncentred, second stage, L = 0', T: 400, N: 10, K: 3, seed: 71, form: 'uncentred', stage: 'second', lags: 0 },
  { name: 'uncentred, second stage, L = 4', T: 500, N: 9, K: 2, seed: 72, form: 'uncentred', stage: 'second', lags: 4 },
  { name: 'centred (means known), first stage, L = 3', T: 450, N: 8, K: 2, seed: 73, form: 'centred-known', stage: 'first', lags: 3 },
  { name: 'centred (means known), second stage, L = 0', T: 350, N: 6, K: 2, seed: 74, form: 'centred-known', stage: 'second', lags: 0 },
  { name: 'centred (means known), second stage, L = 5', T: 600, N: 12, K: 3, seed: 75, form: 'centred-known', stage: 'second', lags: 5 },
  { name: 'uncentred, iterated, L = 2', T: 500, N: 8, K: 2, seed: 76, form: 'uncentred', stage: 'iterated', lags: 2 },
  { name: 'centred (means known), iterated, L = 3', T: 600, N: 10, K: 3, seed: 77, form: 'centred-known', stage: 'iterated', lags: 3 },
];

const EPS = Number.EPSILON;
const TOL = 2 ** 16 * EPS; // ≈ 1.5e-11; measured worst 8.5e-13
const TOL_ITERATED = 2 ** 20 * EPS; // ≈ 2.3e-10

afterAll(() => {
  console.log(`largest relative disagreement with statsmodels LinearIVGMM: ${disagreement.max.toExponential(2)} (${disagreement.where})`);
});

const economies = cases.map((c) => simulateEconomy({ T: c.T, N: c.N, K: c.K, seed: c.seed }));
const fits = cases.map((c, i) => {
  const m = prepareMoments(economies[i].returns, economies[i].factors);
  const fit = fitSdfGmm(m, { stage: c.stage, weighting: 'identity', lags: c.lags, form: c.form === 'uncentred' ? 'uncentred' : 'centred', factorMeansKnown: c.form === 'centred-known' });
  if (!fit.ok) throw new Error(`fit failed: ${c.name}`);
  return fit;
});
const refs = pythonFixture(
  'statsmodels-gmm',
  join(REFERENCE_DIR, 'statsmodels_gmm.py'),
  cases.map((c, i) => ({
    returns: economies[i].returns,
    factors: economies[i].factors,
    form: c.form,
    stage: c.stage,
    lags: c.lags,
    // the same number of weighting updates as Keelson's converged iteration
    iterations: c.stage === 'iterated' ? fits[i].iterations + 1 : undefined,
  })),
) as { b: number[]; covB: number[][]; J?: { stat: number; df: number; p: number } }[];

describe.each(cases.map((c, i) => ({ ...c, i })))('statsmodels LinearIVGMM: $name', (c) => {
  const fit = fits[c.i];
  const ref = refs[c.i];
  const tol = c.stage === 'iterated' ? TOL_ITERATED : TOL;

  it('b̂ equals statsmodels LinearIVGMM.fit (identity first-stage weighting, HAC updates with the same lag)', () => {
    expect(maxRel(fit.b, ref.b, `statsmodels b ${c.name}`)).toBeLessThan(tol);
  });

  it('Var(b̂) equals statsmodels cov_params (sandwich with Ŝ at b̂, has_optimal_weights=False)', () => {
    expect(maxRel(fit.covB, ref.covB, `statsmodels covB ${c.name}`)).toBeLessThan(tol);
  });

  if (c.stage !== 'first')
    it('J, its df and p equal statsmodels jtest()', () => {
      expect(ref.J).toBeDefined();
      expect(fit.J.df).toBe(ref.J!.df);
      expect(maxRel(fit.J.stat, ref.J!.stat, `statsmodels J ${c.name}`)).toBeLessThan(tol);
      expect(maxRel(fit.J.p, ref.J!.p, `statsmodels J p ${c.name}`)).toBeLessThan(tol * 100);
    });
  else
    it('first stage: statsmodels reports no J for W = I comparable to Keelson\'s pseudo-inverse J; b̂ is the W = I solution', () => {
      expect(fit.iterations).toBe(0);
      expect(ref.J).toBeUndefined();
    });
});

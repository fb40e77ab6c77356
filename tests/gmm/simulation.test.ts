/**
 * Seeded simulation of an invented economy with known truth (methods contract): factor 1 prices
 * every asset; factor 2 is traded, correlated with factor 1 (ρ = 0.7) and spanned by it
 * (E[f₂] = c·E[f₁], c = Cov(f₁, f₂)/Var(f₁)). Assets load on f₁ (a_i) and on f₂'s own, unpriced
 * innovation u = f₂ − c·f₁ (d_i), so R_i = a_i f₁ + d_i u + ε_i, E[R] = a·E[f₁]; the true SDF
 * loadings are b = (E[f₁]/Var(f₁), 0) while λ₂ = Cov(f₂, f₁)·b₁ ≠ 0.
 * Expected: λ₂ significant in most draws, b₂ significant rarely; the Wald test on b₂ rejects at
 * about its 5% size.
 */
import { describe, expect, it } from 'vitest';

import { estimateLedger, normalSampler } from './helpers';

const DRAWS = 400;
const T = 1000;
const N = 8;

function draw(seed: number) {
  const z = normalSampler(seed);
  const mu1 = 0.006, s1 = 0.04, s2 = 0.03, rho = 0.7;
  const c = (rho * s2) / s1;
  const a = Array.from({ length: N }, (_, i) => 0.5 + (1.2 * i) / (N - 1));
  const d = Array.from({ length: N }, (_, i) => [0.9, -0.6, 0.3, -1.0, 0.6, 0.0, -0.3, 1.0][i]);
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const f1 = mu1 + s1 * z();
    const f2 = c * f1 + s2 * Math.sqrt(1 - rho * rho) * z(); // E[f2] = c·μ1: priced by f1, no alpha
    factors.push([f1, f2]);
    const u = f2 - c * f1;
    returns.push(a.map((ai, i) => ai * f1 + d[i] * u + 0.02 * z()));
  }
  return { factors, returns };
}

describe('simulated economy: one factor prices everything, a correlated second adds nothing', () => {
  it(`over ${DRAWS} draws (T = ${T}, N = ${N}): λ₂ usually significant, b₂ rejects near 5%`, () => {
    let lambda2Sig = 0;
    let b2Sig = 0;
    let b1Sig = 0;
    let priced2NotNeeded = 0;
    let drop2 = 0;
    for (let d = 0; d < DRAWS; d++) {
      const { factors, returns } = draw(1000 + d);
      const r = estimateLedger({
        assetNames: returns[0].map((_, i) => `Fund ${i + 1}`), returns, factorNames: ['Broad', 'Echo'], factors,
        traded: [true, true],
        options: { stage: 'second', weighting: 'identity', lags: 0, form: 'centred', factorMeansKnown: false, level: 0.05 },
      });
      const [f1, f2] = r.factors;
      if (f2.pLambda < 0.05) lambda2Sig++;
      if (f2.pB < 0.05) b2Sig++;
      if (f1.pB < 0.05) b1Sig++;
      if (f2.verdict === 'priced, not needed') priced2NotNeeded++;
      if (f2.chi2Drop!.p < 0.05) drop2++;
    }
    const rate = b2Sig / DRAWS;
    console.log(`simulation: λ₂ significant ${lambda2Sig}/${DRAWS}, b₂ rejected ${b2Sig}/${DRAWS} (${(100 * rate).toFixed(1)}%), b₁ significant ${b1Sig}/${DRAWS}, 'priced, not needed' ${priced2NotNeeded}/${DRAWS}, drop test on factor 2 rejected ${drop2}/${DRAWS}`);
    // "most draws": more than 60%
    expect(lambda2Sig / DRAWS).toBeGreaterThan(0.6);
    // size of the Wald test: binomial sd at 5% with 400 draws is 1.1%; accepted band [2%, 9%]
    // (about ±3 sd, a little extra room above for the usual small-sample over-rejection of GMM)
    expect(rate).toBeGreaterThanOrEqual(0.02);
    expect(rate).toBeLessThanOrEqual(0.09);
    expect(b1Sig / DRAWS).toBeGreaterThan(0.6);
    expect(priced2NotNeeded / DRAWS).toBeGreaterThan(0.5);
    // the χ² drop test (Newey–West 1987) has the same null: same accepted band
    expect(drop2 / DRAWS).toBeGreaterThanOrEqual(0.02);
    expect(drop2 / DRAWS).toBeLessThanOrEqual(0.09);
  });
});

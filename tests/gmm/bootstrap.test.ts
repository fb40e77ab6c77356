/**
 * Bootstrap p-values (lib/gmm/bootstrap.ts).
 * Checks: reproducibility (same seed → same numbers; chunked = one-shot), the moving-block
 * resampler's structure, and a seeded simulation with known truth (the null holds) where the
 * bootstrap p-values of J, the Wald test on b₂ and the drop test of factor 2 must be roughly
 * uniform: rejection rate at 5% inside a 3-sd binomial band and a Kolmogorov–Smirnov distance
 * below the 1% critical value 1.63/√M (Massey 1951, J. Am. Stat. Assoc. 46, table of the
 * asymptotic KS distribution; from memory, common practice).
 */
import { describe, expect, it } from 'vitest';
import {
  bootstrapResample,
  bootstrapSdfTests,
  defaultBlockLength,
  prepareBootstrap,
  runBootstrapDraws,
  summariseBootstrap,
  type BootstrapInput,
} from '../../lib/gmm/bootstrap';
import { GmmInputError } from '../../lib/gmm/errors';
import { dropTester } from '../../lib/gmm/drop-test';
import { spdInverse } from '../../lib/gmm/linalg';
import { prepareMoments } from '../../lib/gmm/moments';
import { fitSdfGmm, sdfLongRunCovariance } from '../../lib/gmm/sdf-gmm';
import { mulberry32 } from '../../lib/gmm/random';
import { normalSampler, okOf, simulateEconomy } from './helpers';

/**
 * A two-factor economy in which m = 1 − b₁(f₁ − μ₁) prices every asset exactly and b₂ = 0. The
 * betas are spread and the noise small so that b is well identified: with weak identification
 * (noise 0.02) we measured both the asymptotic and the bootstrap Wald test to be conservative.
 */
function nullEconomy(seed: number, T: number, N: number) {
  const z = normalSampler(seed);
  const sd = [0.04, 0.03];
  const rho = 0.5; // factors correlated, so factor 2 has a non-zero λ but b₂ = 0
  const b1 = 3;
  const betas = Array.from({ length: N }, (_, i) => [0.2 + (i / N) * 1.6, 1.5 - (((i * 5) % N) / N) * 1.6]);
  const cov12 = rho * sd[0] * sd[1];
  const sigma = [
    [sd[0] ** 2, cov12],
    [cov12, sd[1] ** 2],
  ];
  // E[R] = C b = β Σ_f b with b = (b₁, 0)
  const mean = betas.map((bi) => (bi[0] * sigma[0][0] + bi[1] * sigma[1][0]) * b1);
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const e1 = z();
    const e2 = rho * e1 + Math.sqrt(1 - rho * rho) * z();
    const f = [sd[0] * e1, sd[1] * e2];
    factors.push([0.005 + f[0], 0.002 + f[1]]);
    returns.push(betas.map((bi, i) => mean[i] + bi[0] * f[0] + bi[1] * f[1] + 0.006 * z()));
  }
  return { returns, factors };
}

function ksUniform(ps: number[]): number {
  const s = [...ps].sort((a, b) => a - b);
  let d = 0;
  s.forEach((p, i) => {
    d = Math.max(d, Math.abs((i + 1) / s.length - p), Math.abs(p - i / s.length));
  });
  return d;
}

const baseOptions = { stage: 'second', weighting: 'identity', lags: 0, form: 'centred', factorMeansKnown: false } as const;

describe('bootstrap generator and resampling', () => {
  it('mulberry32 is the documented sequence (TSDoc example)', () => {
    expect(mulberry32(1)()).toBe(0.6270739405881613);
    const u = mulberry32(99);
    const v = mulberry32(99);
    for (let i = 0; i < 5; i++) expect(u()).toBe(v());
  });

  it('circular blocks are runs of consecutive periods (mod T); the rule ℓ = ceil(T^(1/3))', () => {
    expect(defaultBlockLength(600)).toBe(9); // 600^(1/3) = 8.43
    expect(defaultBlockLength(1000)).toBe(10);
    const idx = bootstrapResample(100, 'block', 10, mulberry32(5));
    for (let b = 0; b < 10; b++) for (let j = 1; j < 10; j++) expect(idx[b * 10 + j]).toBe((idx[b * 10] + j) % 100);
    for (const i of idx) expect(i >= 0 && i < 100).toBe(true);
  });
});

describe('bootstrapSdfTests', () => {
  const e = simulateEconomy({ T: 240, N: 8, K: 2, seed: 11 });
  const input: BootstrapInput = {
    returns: e.returns,
    factors: e.factors,
    factorNames: ['F1', 'F2'],
    options: { ...baseOptions, scheme: 'iid', draws: 99, seed: 7 },
  };

  it('is reproducible and does not depend on how draws are chunked', () => {
    const a = okOf(bootstrapSdfTests(input)).bootstrap;
    const b = okOf(bootstrapSdfTests(input)).bootstrap;
    expect(b).toEqual(a);
    const plan = okOf(prepareBootstrap(input)).plan;
    const parts = [runBootstrapDraws(plan, input.options, 60, 99), runBootstrapDraws(plan, input.options, 0, 60)];
    expect(summariseBootstrap(plan, input, parts)).toEqual(a);
    expect(a.validDraws).toBe(99);
    // p-values on the grid (1 + count)/(B + 1), in (0, 1]
    expect(a.J.bootstrapP * 100).toBeCloseTo(Math.round(a.J.bootstrapP * 100), 9);
    expect(a.J.bootstrapP).toBeGreaterThan(0);
    expect(a.factors).toHaveLength(2);
    expect(a.factors[0].drop).not.toBeNull();
    const other = okOf(bootstrapSdfTests({ ...input, options: { ...input.options, seed: 8 } })).bootstrap;
    expect(other.J.bootstrapP === a.J.bootstrapP && other.jDeciles[4] === a.jDeciles[4]).toBe(false);
  });

  it('moving-block bootstrap runs and reports its block length', () => {
    const r = okOf(bootstrapSdfTests({ ...input, options: { ...input.options, scheme: 'block', blockLength: 6 } })).bootstrap;
    expect(r.blockLength).toBe(6);
    expect(r.notes.join(' ')).toMatch(/Circular blocks of 6 periods; Hall–Horowitz correction/);
    expect(r.correction).toBe('hall-horowitz');
    expect(r.J.bootstrapP).toBeGreaterThan(0);
  });

  it('refuses a bad form, a bad block length, too few draws and an unknown drop-set factor with named errors', () => {
    expect(() => okOf(bootstrapSdfTests({ ...input, options: { ...input.options, form: 'odd' as 'centred' } })).bootstrap).toThrow(GmmInputError);
    expect(() => okOf(bootstrapSdfTests({ ...input, options: { ...input.options, dropSet: ['F9'] } })).bootstrap).toThrow(/dropSet names 'F9'/);
    expect(() => okOf(bootstrapSdfTests({ ...input, options: { ...input.options, scheme: 'block', blockLength: 200 } })).bootstrap).toThrow(/blockLength/);
    expect(() => okOf(bootstrapSdfTests({ ...input, options: { ...input.options, draws: 5 } })).bootstrap).toThrow(/draws/);
  });

  it('first stage: drop tests with W* = Ŝ⁻¹ at the first-stage b̂, equal to the drop tester on that W*', () => {
    const r = okOf(bootstrapSdfTests({ ...input, options: { ...input.options, stage: 'first' } })).bootstrap;
    expect(r.factors[0].drop).not.toBeNull();
    expect(r.notes.join(' ')).toMatch(/first-stage estimate/);
    const m = prepareMoments(e.returns, e.factors);
    const fit = fitSdfGmm(m, { stage: 'first', lags: 0 });
    if (!fit.ok) throw new Error('fit');
    const W = spdInverse(sdfLongRunCovariance(m, fit.b, 'centred', false, 0), 8)!;
    const d = okOf(dropTester({ T: 240, N: 8, K: 2, X: fit.X, W, meanR: m.meanR })([1]));
    expect(r.factors[1].drop!.stat).toBeCloseTo(d.stat, 10);
  });

  it('has power: a strongly priced factor gets a small bootstrap p-value for its b', () => {
    const strong = simulateEconomy({ T: 600, N: 10, K: 1, seed: 3, mu: [0.012], sd: [0.03], noise: 0.01 });
    const r = okOf(bootstrapSdfTests({ returns: strong.returns, factors: strong.factors, factorNames: ['M'], options: { ...baseOptions, scheme: 'iid', draws: 199, seed: 1 } })).bootstrap;
    expect(r.factors[0].wald.asymptoticP).toBeLessThan(0.001);
    expect(r.factors[0].wald.bootstrapP).toBeLessThan(0.02);
  });
});

describe('size under a simulated null (known truth)', () => {
  it('bootstrap p-values of J, Wald on b₂ and the drop test of factor 2 are roughly uniform', () => {
    const M = 200;
    const pJ: number[] = [];
    const pW: number[] = [];
    const pD: number[] = [];
    for (let s = 0; s < M; s++) {
      const { returns, factors } = nullEconomy(1000 + s, 240, 6);
      const r = okOf(bootstrapSdfTests({
        returns,
        factors,
        factorNames: ['F1', 'F2'],
        options: { ...baseOptions, scheme: 'iid', draws: 99, seed: 500 + s },
      })).bootstrap;
      pJ.push(r.J.bootstrapP);
      pW.push(r.factors[1].wald.bootstrapP);
      pD.push(r.factors[1].drop!.bootstrapP);
    }
    // Binomial band: 5% ± 3·sqrt(0.05·0.95/200) = [0.004, 0.096].
    const band = 3 * Math.sqrt((0.05 * 0.95) / M);
    for (const [name, ps] of [['J', pJ], ['Wald b2', pW], ['drop 2', pD]] as const) {
      const rate = ps.filter((p) => p <= 0.05).length / M;
      expect(rate, `${name} rejection rate ${rate}`).toBeGreaterThan(0.05 - band);
      expect(rate, `${name} rejection rate ${rate}`).toBeLessThan(0.05 + band);
      const ks = ksUniform(ps);
      expect(ks, `${name} KS ${ks}`).toBeLessThan(1.63 / Math.sqrt(M));
    }
  });
});

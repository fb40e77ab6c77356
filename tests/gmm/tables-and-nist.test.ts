/**
 * Distribution quantiles against printed tables and least squares against NIST StRD certified
 * values (Longley data).
 */
import { describe, expect, it } from 'vitest';
import chiSquareQuantile from '@stdlib/stats-base-dists-chisquare-quantile';
import fQuantile from '@stdlib/stats-base-dists-f-quantile';
import { chiSquareSf, fSf, normalQuantile, normalTwoSidedP, olsFit } from '../../lib/gmm/index';
import { runReference } from './helpers';

const EPS = Number.EPSILON;

// Keelson reports p-values, not critical values: the quantiles below are the maintained @stdlib
// packages' (no wrapper of Keelson's own), checked against the printed tables the χ²/F tails are read with.
describe('quantiles against printed tables', () => {
  // Source: the χ² table in Abramowitz, M. and Stegun, I. A. (1964), Handbook of Mathematical
  // Functions, Table 26.8 (percentage points of the χ² distribution), and the same values in the
  // NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.4 (critical values of χ²).
  // Values quoted from memory of those tables (3 decimals as printed).
  it('χ²₀.₉₅(1) = 3.841, χ²₀.₉₅(10) = 18.307, χ²₀.₉₉(5) = 15.086', () => {
    expect(chiSquareQuantile(0.95, 1)).toBeCloseTo(3.841, 3);
    expect(chiSquareQuantile(0.95, 10)).toBeCloseTo(18.307, 3);
    expect(chiSquareQuantile(0.99, 5)).toBeCloseTo(15.086, 3);
    // The true value to 16 digits: χ²₀.₉₅(1) = z₀.₉₇₅² = 1.959963984540054² = 3.841458820694124
    // (the square of the normal quantile tabulated to 16 digits in Abramowitz and Stegun 26.2.23's
    // tables, from memory; scipy.stats.chi2.ppf(0.95, 1) gives the same digits, see the fixture test
    // below). Tolerance 64 ε relative: the quantile comes from a root search on the incomplete gamma.
    expect(Math.abs(chiSquareQuantile(0.95, 1) - 3.841458820694124)).toBeLessThanOrEqual(64 * EPS * 3.841458820694124);
    // and the upper tail used for p-values inverts it
    expect(chiSquareSf(18.307, 10)).toBeCloseTo(0.05, 4);
  });

  // Source: F table, NIST/SEMATECH e-Handbook §1.3.6.7.3 (upper critical values of the F
  // distribution, α = 0.05, ν1 = 5, ν2 = 100: 2.305). From memory of that table.
  it('F₀.₉₅(5, 100) ≈ 2.305 and F₀.₉₅(1, 10) = 4.965', () => {
    expect(fQuantile(0.95, 5, 100)).toBeCloseTo(2.305, 3);
    // Abramowitz and Stegun Table 26.9 / any F table: F₀.₉₅(1, 10) = 4.96 (4.965 to 3 d.p.), from memory
    expect(fQuantile(0.95, 1, 10)).toBeCloseTo(4.965, 3);
    expect(fSf(2.305, 5, 100)).toBeCloseTo(0.05, 3);
  });

  // Source: standard normal table (any statistics text): z₀.₉₇₅ = 1.960, two-sided p at 1.96 = 0.05.
  it('normal: z₀.₉₇₅ = 1.960; two-sided p(1.96) = 0.050', () => {
    expect(normalQuantile(0.975)).toBeCloseTo(1.96, 3);
    expect(normalTwoSidedP(1.959963984540054)).toBeCloseTo(0.05, 12);
  });

  // Identity: an F(1, ν) variable is the square of a t(ν): F₀.₉₅(1, ν) = t₀.₉₇₅(ν)². And χ²(df)/df
  // is the limit of F(df, ν) as ν → ∞.
  it('F(1, ν) = t(ν)² and F(df, ∞) = χ²(df)/df', () => {
    expect(fSf(2.228138851986274 ** 2, 1, 10)).toBeCloseTo(0.05, 10); // t₀.₉₇₅(10) = 2.228 (t table)
    expect(fSf(3.841458820694124, 1, 1e9)).toBeCloseTo(0.05, 6);
  });

  it('degenerate inputs give limits, never NaN', () => {
    expect(Number.isNaN(chiSquareSf(NaN, 3))).toBe(false);
    expect(chiSquareSf(0, 0)).toBe(1);
    expect(chiSquareSf(-1, 3)).toBe(1);
    expect(fSf(Infinity, 2, 3)).toBe(0);
    expect(normalTwoSidedP(Infinity)).toBe(0);
  });
});

// NIST Statistical Reference Datasets, Linear Least Squares, "Longley" (higher difficulty),
// https://www.itl.nist.gov/div898/strd/lls/data/Longley.shtml. Data: Longley (1967, JASA 62,
// 819–841), as shipped in Debian's python3-statsmodels (statsmodels/datasets/longley/longley.csv).
// Certified values: from memory of the NIST page, identical to the copy in
// statsmodels/regression/tests/results/results_regression.py (class Longley); cross-checked
// below with numpy.linalg.lstsq.
const LONGLEY = [
  // y=TOTEMP, GNPDEFL, GNP, UNEMP, ARMED, POP, YEAR
  [60323, 83, 234289, 2356, 1590, 107608, 1947],
  [61122, 88.5, 259426, 2325, 1456, 108632, 1948],
  [60171, 88.2, 258054, 3682, 1616, 109773, 1949],
  [61187, 89.5, 284599, 3351, 1650, 110929, 1950],
  [63221, 96.2, 328975, 2099, 3099, 112075, 1951],
  [63639, 98.1, 346999, 1932, 3594, 113270, 1952],
  [64989, 99, 365385, 1870, 3547, 115094, 1953],
  [63761, 100, 363112, 3578, 3350, 116219, 1954],
  [66019, 101.2, 397469, 2904, 3048, 117388, 1955],
  [67857, 104.6, 419180, 2822, 2857, 118734, 1956],
  [68169, 108.4, 442769, 2936, 2798, 120445, 1957],
  [66513, 110.8, 444546, 4681, 2637, 121950, 1958],
  [68655, 112.6, 482704, 3813, 2552, 123366, 1959],
  [69564, 114.2, 502601, 3931, 2514, 125368, 1960],
  [69331, 115.7, 518173, 4806, 2572, 127852, 1961],
  [70551, 116.9, 554894, 4007, 2827, 130081, 1962],
];
const CERT_COEF = [-3482258.63459582, 15.0618722713733, -0.358191792925910e-1, -2.02022980381683, -1.03322686717359, -0.511041056535807e-1, 1829.15146461355];
const CERT_SE = [890420.383607373, 84.9149257747669, 0.334910077722432e-1, 0.488399681651699, 0.214274163161675, 0.226073200069370, 455.478499142212];
const CERT_RESID_SD = 304.854073561965;
const CERT_R2 = 0.995479004577296;

// Log relative error (number of correct significant digits), the NIST StRD measure.
const lre = (a: number, c: number) => -Math.log10(Math.abs(a - c) / Math.abs(c));

describe('least squares against NIST StRD Longley certified values', () => {
  const y = LONGLEY.map((r) => r[0]);
  const X = LONGLEY.map((r) => [1, ...r.slice(1)]);
  const fit = olsFit(y, X);
  if (!fit.ok) throw new Error('singular');

  it('coefficients and standard errors to ≥ 11 significant digits (LRE ≥ 11; measured ≥ 12.5)', () => {
    for (let j = 0; j < 7; j++) {
      expect(lre(fit.coef[j], CERT_COEF[j])).toBeGreaterThanOrEqual(11);
      expect(lre(fit.se[j], CERT_SE[j])).toBeGreaterThanOrEqual(11);
    }
    expect(lre(fit.residualSd, CERT_RESID_SD)).toBeGreaterThanOrEqual(8);
    expect(lre(fit.rSquared, CERT_R2)).toBeGreaterThanOrEqual(8);
    expect(fit.dfResidual).toBe(9);
  });

  it('the values typed in from memory agree with numpy.linalg.lstsq on the same data (fixture tests/fixtures/longley-lstsq.json)', () => {
    const np = runReference('longley-lstsq', { task: 'lstsq', data: LONGLEY });
    for (let j = 0; j < 7; j++) {
      expect(lre(np.b[j], CERT_COEF[j])).toBeGreaterThanOrEqual(7);
      expect(lre(np.se[j], CERT_SE[j])).toBeGreaterThanOrEqual(7);
    }
  });

  it('the module example: y = 1 + 2x exactly', () => {
    const f = olsFit([3, 5, 7, 9], [[1, 1], [1, 2], [1, 3], [1, 4]]);
    expect(f.ok && f.coef[0]).toBeCloseTo(1, 12);
    expect(f.ok && f.coef[1]).toBeCloseTo(2, 12);
  });
});

// p-values and quantiles against scipy.stats (Debian python3-scipy) and against the true values
// (mpmath at 40 digits, Debian python3-mpmath), both in the committed fixture
// tests/fixtures/distributions.json (regenerated by npm run fixtures:check). Every p-value above
// 1e-300 to 1e-13 relative (≈ 450 ε) of the true value, and of scipy wherever scipy itself is within
// 1e-13 of the true value: the upper tails use the same argument transformations as scipy
// (chi2.sf = Q(df/2, x/2), f.sf = I_{d2/(d2 + d1 x)}(d2/2, d1/2), 2 norm.sf = erfc(|z|/√2)), so only
// the special functions' own rounding differs. The true values are taken at the same double
// arguments. (Measured: scipy's f.sf is up to 3.8e-12 off the true value at df2 = 11900, where the
// check against scipy is replaced by the one against the true value; Keelson's worst is 1.7e-14.)
describe('p-values and quantiles against scipy.stats and 40-digit mpmath', () => {
  const chi2Stats = [1e-3, 0.5, 1, 3.841458820694124, 10, 50, 100, 300, 800, 1300];
  const chi2Dfs = [1, 2, 3, 5, 10, 25, 100, 300];
  const fStats = [0.1, 1, 2.305, 5, 20, 100];
  const fDfs: [number, number][] = [[1, 10], [5, 100], [10, 589], [25, 575], [3, 30], [100, 11900], [2, 3]];
  const input = {
    task: 'distributions',
    chi2Sf: chi2Stats.flatMap((x) => chi2Dfs.map((df) => [x, df])),
    fSf: fStats.flatMap((x) => fDfs.map(([a, b]) => [x, a, b])),
    normalTwoSided: [0, 0.3, 0.5, 1, 1.5, 1.959963984540054, 2.5, 3, 5, 8, 12, 20, 30, 37],
    normalPpf: [1e-10, 0.001, 0.025, 0.3, 0.5, 0.9, 0.95, 0.975, 0.995],
    chi2Ppf: [[0.95, 1], [0.95, 10], [0.99, 5], [0.95, 100], [0.5, 3]],
    fPpf: [[0.95, 5, 100], [0.95, 1, 10], [0.99, 10, 589]],
  };
  type Tails = Record<'chi2Sf' | 'fSf' | 'normalTwoSided' | 'normalPpf' | 'chi2Ppf' | 'fPpf', number[]>;
  const ref = runReference('distributions', input) as Tails & { mpmath: Tails };
  const P_TOL = 1e-13;
  const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
  /** ours within P_TOL of the true value; and of scipy unless scipy itself is more than P_TOL off the true value. */
  const checkTail = (ours: number, scipy: number, truth: number, where: string): 'scipy-off' | 'ok' => {
    expect(rel(ours, truth), `${where} vs mpmath`).toBeLessThanOrEqual(P_TOL);
    if (rel(scipy, truth) > P_TOL) return 'scipy-off';
    expect(rel(ours, scipy), `${where} vs scipy`).toBeLessThanOrEqual(P_TOL);
    return 'ok';
  };

  it('χ² upper tail P(χ²(df) > x) = scipy chi2.sf and the true value to 1e-13 relative wherever it exceeds 1e-300', () => {
    let checked = 0;
    input.chi2Sf.forEach(([x, df], i) => {
      if (!(ref.mpmath.chi2Sf[i] > 1e-300)) return;
      if (checkTail(chiSquareSf(x, df), ref.chi2Sf[i], ref.mpmath.chi2Sf[i], `chi2.sf(${x}, ${df})`) === 'ok') checked++;
    });
    expect(checked).toBeGreaterThan(70);
  });

  it('F upper tail = scipy f.sf and the true value to 1e-13 relative wherever it exceeds 1e-300', () => {
    let checked = 0;
    const scipyOff: string[] = [];
    input.fSf.forEach(([x, a, b], i) => {
      if (!(ref.mpmath.fSf[i] > 1e-300)) return;
      if (checkTail(fSf(x, a, b), ref.fSf[i], ref.mpmath.fSf[i], `f.sf(${x}, ${a}, ${b})`) === 'ok') checked++;
      else scipyOff.push(`f.sf(${x}, ${a}, ${b})`);
    });
    if (scipyOff.length) console.log(`scipy itself off the 40-digit value by > 1e-13 at: ${scipyOff.join(', ')}`);
    expect(checked).toBeGreaterThan(35);
  });

  it('two-sided normal p = 2·scipy norm.sf(|z|) to 1e-13 relative (down to z = 37, p ≈ 6e-300)', () => {
    input.normalTwoSided.forEach((z, i) => {
      expect(ref.normalTwoSided[i]).toBeGreaterThan(1e-300);
      expect(checkTail(normalTwoSidedP(z), ref.normalTwoSided[i], ref.mpmath.normalTwoSided[i], `2 norm.sf(${z})`)).toBe('ok');
      expect(normalTwoSidedP(-z)).toBe(normalTwoSidedP(z));
    });
  });

  it('quantiles: normal to 8 ε of the true value and scipy; χ² and F (root searches) to 1e-12 relative of scipy ppf', () => {
    input.normalPpf.forEach((p, i) => {
      const tol = 8 * EPS * Math.max(1, Math.abs(ref.mpmath.normalPpf[i]));
      expect(Math.abs(normalQuantile(p) - ref.mpmath.normalPpf[i]), `norm.ppf(${p}) vs mpmath`).toBeLessThanOrEqual(tol);
      expect(Math.abs(normalQuantile(p) - ref.normalPpf[i]), `norm.ppf(${p}) vs scipy`).toBeLessThanOrEqual(tol);
    });
    input.chi2Ppf.forEach(([p, df], i) => expect(rel(chiSquareQuantile(p, df), ref.chi2Ppf[i]), `chi2.ppf(${p}, ${df})`).toBeLessThanOrEqual(1e-12));
    input.fPpf.forEach(([p, a, b], i) => expect(rel(fQuantile(p, a, b), ref.fPpf[i]), `f.ppf(${p}, ${a}, ${b})`).toBeLessThanOrEqual(1e-12));
    // the printed value of the table test above is scipy's too
    expect(Math.abs(ref.chi2Ppf[0] - 3.841458820694124)).toBeLessThanOrEqual(4 * EPS * 3.841458820694124);
  });
});

/**
 * Distribution functions used for p-values, on jstat. Every function returns a finite number in
 * [0, 1] (p-values) or a finite quantile; degenerate inputs (df = 0, a statistic ≤ 0) get the
 * limiting value, never NaN.
 */
import jstat from 'jstat';

const { jStat } = jstat;
// jstat's log-gamma (not in the shared type declaration, which lists only the distributions).
const gammaln = jStat.gammaln as (x: number) => number;

function clampP(p: number): number {
  if (!Number.isFinite(p)) return p > 0 ? 1 : 0;
  return Math.min(1, Math.max(0, p));
}

/**
 * Regularised upper incomplete gamma Q(a, x) = Γ(a, x)/Γ(a): series for x < a + 1 (then 1 − P),
 * Lentz continued fraction otherwise (Press et al., Numerical Recipes, 3rd ed., §6.2). Computing
 * the upper tail directly keeps small p-values accurate (1 − cdf underflows to 0 near 1e-16).
 */
export function regularizedGammaQ(a: number, x: number): number {
  if (!(x > 0)) return 1;
  if (!Number.isFinite(x)) return 0;
  const lead = -x + a * Math.log(x) - gammaln(a);
  if (x < a + 1) {
    let ap = a;
    let sum = 1 / a;
    let del = sum;
    for (let n = 0; n < 100000; n++) {
      ap += 1;
      del *= x / ap;
      sum += del;
      if (Math.abs(del) < Math.abs(sum) * 1e-16) break;
    }
    return clampP(1 - sum * Math.exp(lead));
  }
  const FPMIN = 1e-300;
  let b = x + 1 - a;
  let c = 1 / FPMIN;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 100000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = b + an / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return clampP(Math.exp(lead) * h);
}

/** Upper-tail probability P(χ²(df) > stat) = Q(df/2, stat/2). df = 0 (a degenerate χ²) gives 1. */
export function chiSquareSf(stat: number, df: number): number {
  if (df <= 0 || !(stat > 0)) return 1;
  return regularizedGammaQ(df / 2, stat / 2);
}

/** Two-sided standard normal p-value 2·P(Z > |z|). */
export function normalTwoSidedP(z: number): number {
  if (!Number.isFinite(z)) return 0;
  // 2·(1 − Φ(|z|)) = P(χ²(1) > z²) = Q(1/2, z²/2), computed directly so that small p-values keep
  // their digits
  return regularizedGammaQ(0.5, (z * z) / 2);
}

/**
 * Continued fraction for the regularised incomplete beta (modified Lentz), to 1e-15.
 * (Press, Teukolsky, Vetterling and Flannery, Numerical Recipes, 3rd ed., §6.4; jstat's own
 * version stops at 3e-7, too coarse for 1e-8 agreement with scipy.)
 */
function betaContinuedFraction(x: number, a: number, b: number): number {
  const FPMIN = 1e-300;
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < FPMIN) d = FPMIN;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 10000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < FPMIN) d = FPMIN;
    c = 1 + aa / c;
    if (Math.abs(c) < FPMIN) c = FPMIN;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-15) break;
  }
  return h;
}

/** Regularised incomplete beta I_x(a, b). */
export function regularizedBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0;
  if (x >= 1) return 1;
  const lbt = gammaln(a + b) - gammaln(a) - gammaln(b) + a * Math.log(x) + b * Math.log1p(-x);
  const bt = Math.exp(lbt);
  if (x < (a + 1) / (a + b + 2)) return clampP((bt * betaContinuedFraction(x, a, b)) / a);
  return clampP(1 - (bt * betaContinuedFraction(1 - x, b, a)) / b);
}

/** Upper-tail probability P(F(df1, df2) > stat) = I_{df2/(df2 + df1·stat)}(df2/2, df1/2). */
export function fSf(stat: number, df1: number, df2: number): number {
  if (df1 <= 0 || df2 <= 0 || !(stat > 0)) return 1;
  if (!Number.isFinite(stat)) return 0;
  return regularizedBeta(df2 / (df2 + df1 * stat), df2 / 2, df1 / 2);
}

/** Quantile of χ²(df): the x with P(χ²(df) ≤ x) = p. */
export function chiSquareQuantile(p: number, df: number): number {
  return jStat.chisquare.inv(p, df);
}

/** Quantile of F(df1, df2). */
export function fQuantile(p: number, df1: number, df2: number): number {
  return jStat.centralF.inv(p, df1, df2);
}

/** Quantile of the standard normal. */
export function normalQuantile(p: number): number {
  return jStat.normal.inv(p, 0, 1);
}

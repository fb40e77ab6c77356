/**
 * Simulations with known truth for robust inference and small samples (`npx tsx bench/run.ts robust`;
 * alone: `npx tsx bench/robust.bench.ts [--quick]`). Seeded, invented economies; one core.
 *
 * Table 1 — a misspecified economy (Kan and Robotti 2008; Gospodinov, Kan and Robotti 2014):
 *   iid normal factors f_t ~ N(μ_f, Σ_f), returns R_t = a + B f_t + ε_t with pricing errors a of
 *   about 1.5% a period, T = 1,200, N = 10, K = 2, first stage, the default lag. The pseudo-true
 *   b* = (C₀'W₀C₀)^{-1} C₀'W₀ E[R] is computed from the population moments (C₀ = B Σ_f,
 *   Cov(R) = B Σ_f B' + Σ_ε, E[RR'] = Cov(R) + E[R]E[R]') for each weighting W₀ (identity,
 *   second moment, covariance). Coverage of the 95% robust and standard intervals for b*_k over
 *   3,000 draws; the robust coverage must lie in 93.5–96.5% (≈ ±3.8 binomial sd) or the bench fails.
 * Table 2 — small sample (the ledger's caution): T = 120, N = 25, K = 2, factor 2 correlated with
 *   factor 1 and priced through it but b₂ = 0 (correct specification, so b* = (μ₁/σ₁², 0) for
 *   every weighting); the default lag. Rejection rates of the nominal 5% Wald test on b₂ and of
 *   the drop test of factor 2, coverage of the 95% intervals for b₁ and b₂, for second-stage runs
 *   (standard SEs) and first-stage W = I runs (standard and robust SEs).
 * Table 3 — a long lag: the same economy at T = 240, N = 5 with L = 20 (> 2·T^(1/3) ≈ 12.4).
 * The ledger's SMALL_SAMPLE_FIGURES / LARGE_LAG_FIGURES (quoted in its caution) must lie within
 * 3 binomial sd (plus rounding to whole percent) of what tables 2 and 3 measure, or the bench fails.
 */
import { cpus, loadavg } from 'node:os';
import {
  defaultLag,
  estimateLedger,
  fitSdfGmm,
  LARGE_LAG_FIGURES,
  momentsFromPacked,
  normalQuantile,
  robustInference,
  secondMomentMatrix,
  SMALL_SAMPLE_FIGURES,
  type FirstStageWeighting,
} from '../lib/gmm/index';
import { spdInverse } from '../lib/gmm/linalg';
import { boxMuller, mulberry32 } from '../lib/gmm/random';

const quick = process.argv.includes('--quick');
const started = Date.now();
let failures = 0;
const z975 = normalQuantile(0.975);

function table(head: string[], rows: string[][]): void {
  const w = head.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  console.log(head.map((h, j) => (j === 0 ? h.padEnd(w[j]) : h.padStart(w[j]))).join('  '));
  for (const r of rows) console.log(r.map((c, j) => (j === 0 ? c.padEnd(w[j]) : c.padStart(w[j]))).join('  '));
}
const pc = (x: number) => `${(100 * x).toFixed(1)}%`;

// ---------------------------------------------------------------- small dense helpers
function matMulN(A: number[][], B: number[][]): number[][] {
  return A.map((r) => B[0].map((_, j) => r.reduce((s, v, k) => s + v * B[k][j], 0)));
}
const tr = (A: number[][]) => A[0].map((_, j) => A.map((r) => r[j]));
function inv(A: number[][]): number[][] {
  const n = A.length;
  const X = spdInverse(Float64Array.from(A.flat()), n);
  if (!X) throw new Error('singular population matrix');
  return Array.from({ length: n }, (_, i) => Array.from(X.subarray(i * n, i * n + n)));
}

// ---------------------------------------------------------------- table 1: misspecified economy
function table1(): void {
  const T = 1200;
  const N = 10;
  const K = 2;
  const draws = quick ? 400 : 3000;
  const z = boxMuller(mulberry32(20261202));
  const muF = [0.006, 0.004];
  const sdF = [0.04, 0.03];
  const rho = 0.3;
  const SigF = [
    [sdF[0] ** 2, rho * sdF[0] * sdF[1]],
    [rho * sdF[0] * sdF[1], sdF[1] ** 2],
  ];
  const cholF = [
    [sdF[0], 0],
    [rho * sdF[1], sdF[1] * Math.sqrt(1 - rho * rho)],
  ];
  const B = Array.from({ length: N }, (_, i) => [0.6 + (0.8 * i) / (N - 1), (i % 2 === 0 ? 1 : -1) * (0.2 + (0.6 * i) / (N - 1))]);
  const a = Array.from({ length: N }, (_, i) => 0.027 * [1.1, -0.8, 0.4, -1.3, 0.9, -0.2, 1.4, -0.6, 0.1, -1.0][i]);
  const sdE = 0.05;
  // population moments
  const ER = B.map((bi, i) => a[i] + bi[0] * muF[0] + bi[1] * muF[1]);
  const C0 = matMulN(B, SigF);
  const CovR = matMulN(matMulN(B, SigF), tr(B)).map((r, i) => r.map((v, j) => v + (i === j ? sdE * sdE : 0)));
  const ERR = CovR.map((r, i) => r.map((v, j) => v + ER[i] * ER[j]));
  const Ws: Record<FirstStageWeighting, number[][]> = {
    identity: CovR.map((r, i) => r.map((_, j) => (i === j ? 1 : 0))),
    'second-moment': inv(ERR),
    covariance: inv(CovR),
  };
  const weightings: FirstStageWeighting[] = ['identity', 'second-moment', 'covariance'];
  const bStar: Record<string, number[]> = {};
  const eStar: Record<string, number> = {};
  for (const w of weightings) {
    const W = Ws[w];
    const A = matMulN(matMulN(tr(C0), W), C0);
    const rhs = matMulN(matMulN(tr(C0), W), ER.map((v) => [v]));
    bStar[w] = matMulN(inv(A), rhs).map((r) => r[0]);
    const e = ER.map((v, i) => v - C0[i][0] * bStar[w][0] - C0[i][1] * bStar[w][1]);
    eStar[w] = Math.sqrt(e.reduce((s, v) => s + v * v, 0) / N);
  }
  const L = defaultLag(T);
  const cover = Object.fromEntries(weightings.map((w) => [w, { rob: [0, 0], std: [0, 0] }])) as Record<string, { rob: number[]; std: number[] }>;
  const Rb = new Float64Array(T * N);
  const Fb = new Float64Array(T * K);
  const t0 = Date.now();
  for (let d = 0; d < draws; d++) {
    for (let t = 0; t < T; t++) {
      const u0 = z();
      const u1 = z();
      const f0 = muF[0] + cholF[0][0] * u0;
      const f1 = muF[1] + cholF[1][0] * u0 + cholF[1][1] * u1;
      Fb[t * K] = f0;
      Fb[t * K + 1] = f1;
      for (let i = 0; i < N; i++) Rb[t * N + i] = a[i] + B[i][0] * f0 + B[i][1] * f1 + sdE * z();
    }
    const m = momentsFromPacked(Rb, Fb, T, N, K);
    const second = secondMomentMatrix(m.R, T, N, m.Rcols);
    for (const w of weightings) {
      const fit = fitSdfGmm(m, { stage: 'first', weighting: w, lags: L, secondMoment: second });
      if (!fit.ok) throw new Error(fit.message);
      const rob = robustInference(m, fit);
      if (!rob.ok) throw new Error(rob.message);
      for (let k = 0; k < K; k++) {
        const dev = Math.abs(fit.b[k] - bStar[w][k]);
        if (dev <= z975 * Math.sqrt(rob.covB[k * K + k])) cover[w].rob[k]++;
        if (dev <= z975 * Math.sqrt(fit.covB[k * K + k])) cover[w].std[k]++;
      }
    }
  }
  console.log(`\nTable 1. Misspecified economy: T = ${T}, N = ${N}, K = ${K}, first stage, lag ${L} (default), ${draws} draws (${((Date.now() - t0) / 1000).toFixed(1)} s)`);
  console.log('Coverage of nominal 95% intervals around the pseudo-true b* (from population moments); robust must lie in 93.5–96.5%.');
  const rows: string[][] = [];
  for (const w of weightings) {
    const rob = cover[w].rob.map((c) => c / draws);
    const std = cover[w].std.map((c) => c / draws);
    rows.push([w, eStar[w].toFixed(4), bStar[w].map((v) => v.toFixed(2)).join(', '), pc(rob[0]), pc(std[0]), pc(rob[1]), pc(std[1])]);
    for (const r of rob)
      if (!(r >= 0.935 && r <= 0.965)) {
        failures++;
        console.log(`FAIL: robust coverage ${pc(r)} for ${w} is outside 93.5–96.5%`);
      }
  }
  table(['weighting', 'rms e*', 'b*', 'b1 robust', 'b1 standard', 'b2 robust', 'b2 standard'], rows);
}

// ---------------------------------------------------------------- tables 2 and 3: b₂ = 0, factor 2 priced
interface NullStats {
  wald: number;
  drop: number;
  cover1: number;
  cover2: number;
}

function nullEconomy(T: number, N: number, z: () => number) {
  const mu1 = 0.006, s1 = 0.04, s2 = 0.03, rho = 0.7;
  const c = (rho * s2) / s1;
  const a = Array.from({ length: N }, (_, i) => 0.5 + (1.2 * i) / (N - 1));
  const d = Array.from({ length: N }, (_, i) => Math.sin(1.7 * i + 0.3));
  const factors: number[][] = [];
  const returns: number[][] = [];
  for (let t = 0; t < T; t++) {
    const f1 = mu1 + s1 * z();
    const f2 = c * f1 + s2 * Math.sqrt(1 - rho * rho) * z(); // E[f2] = c·μ1: priced through f1, b₂ = 0
    factors.push([f1, f2]);
    const u = f2 - c * f1;
    returns.push(a.map((ai, i) => ai * f1 + d[i] * u + 0.03 * z()));
  }
  return { factors, returns, bStar: [mu1 / (s1 * s1), 0] };
}

function nullTable(T: number, N: number, L: number, draws: number, seed: number) {
  const z = boxMuller(mulberry32(seed));
  const acc = { second: { wald: 0, drop: 0, cover1: 0, cover2: 0 }, firstStd: { wald: 0, drop: 0, cover1: 0, cover2: 0 }, firstRob: { wald: 0, drop: 0, cover1: 0, cover2: 0 } };
  const assetNames = Array.from({ length: N }, (_, i) => `A${i + 1}`);
  const t0 = Date.now();
  for (let d = 0; d < draws; d++) {
    const { factors, returns, bStar } = nullEconomy(T, N, z);
    const base = { assetNames, returns, factorNames: ['F1', 'F2'], factors, traded: [true, true] };
    const opts = { weighting: 'identity', lags: L, form: 'centred', factorMeansKnown: false, level: 0.05 } as const;
    const secOut = estimateLedger({ ...base, options: { ...opts, stage: 'second', basis: 'standard' } });
    const fstOut = estimateLedger({ ...base, options: { ...opts, stage: 'first', basis: 'robust' } });
    if (!secOut.ok || !fstOut.ok) throw new Error('estimateLedger failed on a simulated draw');
    const sec = secOut.ledger;
    const fst = fstOut.ledger;
    const tally = (s: NullStats, f: (k: number) => { pB: number; ci: readonly [number, number] }, pDrop: number) => {
      if (f(1).pB < 0.05) s.wald++;
      if (pDrop < 0.05) s.drop++;
      const c1 = f(0).ci;
      const c2 = f(1).ci;
      if (c1[0] <= bStar[0] && bStar[0] <= c1[1]) s.cover1++;
      if (c2[0] <= bStar[1] && bStar[1] <= c2[1]) s.cover2++;
    };
    tally(acc.second, (k) => ({ pB: sec.factors[k].pB, ci: sec.factors[k].ciB }), sec.factors[1].chi2Drop!.p);
    tally(acc.firstStd, (k) => ({ pB: fst.factors[k].pB, ci: fst.factors[k].ciB }), fst.factors[1].chi2Drop!.p);
    tally(acc.firstRob, (k) => ({ pB: fst.factors[k].robust!.pB, ci: fst.factors[k].robust!.ciB }), fst.factors[1].chi2Drop!.p);
  }
  const secs = (Date.now() - t0) / 1000;
  const scale = (s: NullStats): NullStats => ({ wald: s.wald / draws, drop: s.drop / draws, cover1: s.cover1 / draws, cover2: s.cover2 / draws });
  return { second: scale(acc.second), firstStd: scale(acc.firstStd), firstRob: scale(acc.firstRob), secs };
}

function printNull(title: string, r: ReturnType<typeof nullTable>): void {
  console.log(title);
  table(
    ['run (SEs)', 'Wald b2 rejects', 'drop F2 rejects', 'b1 coverage', 'b2 coverage'],
    [
      ['second stage (standard)', pc(r.second.wald), pc(r.second.drop), pc(r.second.cover1), pc(r.second.cover2)],
      ['first stage, W = I (standard)', pc(r.firstStd.wald), pc(r.firstStd.drop), pc(r.firstStd.cover1), pc(r.firstStd.cover2)],
      ['first stage, W = I (robust)', pc(r.firstRob.wald), '(same W*)', pc(r.firstRob.cover1), pc(r.firstRob.cover2)],
    ],
  );
}

/** The quoted figure (whole percent) must be within 3 binomial sd + 0.5 point of the measurement. */
function checkFigure(name: string, quoted: number, measured: number, draws: number): void {
  const sd = Math.sqrt(Math.max(measured * (1 - measured), 0.01) / draws);
  const ok = Math.abs(quoted - measured) <= 3 * sd + 0.005;
  console.log(`${ok ? 'ok  ' : 'FAIL'} caution figure ${name}: quoted ${pc(quoted)}, measured ${pc(measured)} (±${pc(3 * sd)})`);
  if (!ok) failures++;
}

table1();

const draws2 = quick ? 300 : 2000;
const s = SMALL_SAMPLE_FIGURES;
const L2 = defaultLag(s.T);
const t2 = nullTable(s.T, s.N, L2, draws2, 4242);
printNull(`\nTable 2. Small sample: T = ${s.T}, N = ${s.N}, K = 2, b* = (μ₁/σ₁², 0), lag ${L2} (default), ${draws2} draws (${t2.secs.toFixed(1)} s). Nominal 5% tests, 95% intervals:`, t2);
if (L2 !== s.lag) {
  failures++;
  console.log(`FAIL: SMALL_SAMPLE_FIGURES.lag = ${s.lag} but the default lag at T = ${s.T} is ${L2}`);
}
checkFigure('small sample, Wald rejection (second stage)', s.waldRejection, t2.second.wald, draws2);
checkFigure('small sample, drop rejection (second stage)', s.dropRejection, t2.second.drop, draws2);
checkFigure('small sample, b coverage (second stage, lower of b1, b2)', s.coverage, Math.min(t2.second.cover1, t2.second.cover2), draws2);
checkFigure('small sample, Wald rejection (first stage, W = I)', s.firstStageWaldRejection, t2.firstStd.wald, draws2);

const g = LARGE_LAG_FIGURES;
const draws3 = quick ? 300 : 1500;
const t3 = nullTable(g.T, g.N, g.lag, draws3, 777);
printNull(`\nTable 3. Long lag: T = ${g.T}, N = ${g.N}, K = 2, lag ${g.lag} (2·T^(1/3) = ${(2 * Math.cbrt(g.T)).toFixed(1)}), ${draws3} draws (${t3.secs.toFixed(1)} s):`, t3);
checkFigure('long lag, Wald rejection (second stage)', g.waldRejection, t3.second.wald, draws3);
checkFigure('long lag, b coverage (second stage, lower of b1, b2)', g.coverage, Math.min(t3.second.cover1, t3.second.cover2), draws3);

console.log(`\n${failures === 0 ? 'all checks passed' : `${failures} check(s) FAILED`}; ${((Date.now() - started) / 1000).toFixed(0)} s wall; load ${loadavg().map((v) => v.toFixed(1)).join(' ')} on ${cpus().length} cores`);
process.exit(failures === 0 ? 0 : 1);

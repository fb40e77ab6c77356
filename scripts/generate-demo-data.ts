/**
 * Generates Keelson's invented demo return libraries (assets/demo/*.csv) from a known SDF, with a
 * seeded PRNG, so the files are the same on every run. Everything here is invented: the market,
 * the portfolio names, the factors and the numbers.
 *
 * Monthly library "Harbour market" (T = 600, 1975-01 … 2024-12, percent units):
 *   five factors built from independent standard normal shocks z1…z5 (monthly):
 *     TIDE    = λ_TIDE + σ1 z1                                   traded
 *     SWELL   = λ_SWELL + σ2 (ρ12 z1 + √(1−ρ12²) z2)             traded, correlated with TIDE
 *     DRIFT   = σ3 z3                                            traded, uncorrelated, mean 0
 *     GALE    = σ4 (ρ14 z1 + √(1−ρ14²) z4)                       NOT traded (a "freight surprise"), mean 0
 *     BALLAST = λ_BALLAST + σ5 z5                                traded, uncorrelated
 *   and a centred SDF m = 1 − b'(f − μ) with b = (b_TIDE, 0, 0, b_GALE, b_BALLAST), where b_GALE is
 *   chosen so that λ_GALE = (Σ_f b)_GALE = 0. Then (population):
 *     TIDE    b ≠ 0, λ ≠ 0  → needed and priced
 *     SWELL   b = 0, λ = Cov(SWELL, f) b ≠ 0 (through its correlation with TIDE) → priced, not needed
 *     DRIFT   b = 0, λ = 0  → neither
 *     GALE    b ≠ 0, λ = 0  → needed, not priced alone
 *     BALLAST b ≠ 0, λ ≠ 0  → needed and priced
 *   Traded factors price themselves: E[f_k] = (Σ_f b)_k = λ_k.
 *   25 test portfolios (a 5 × 5 grid of invented names): R_i = RF + β_i'(f − μ) + β_i'λ + ε_i, so the
 *   excess returns satisfy E[R − RF] = β_i'λ = C_i b. RF is an invented, slowly moving bill rate.
 *
 * Daily library "Dockside daily" (about two years of weekdays, decimals): 7 portfolios, 2 traded
 * factors, RF; a one-factor economy with the same construction.
 *
 * Run: `npx tsx scripts/generate-demo-data.ts` (writes the CSVs; they are committed).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { boxMuller as normals, mulberry32 } from '../lib/gmm/random';

/** Chosen so that the sample verdicts match the population ones under every stage and weighting (checked by tests/api/libraries-demo.test.ts). */
export const DEMO_SEED = 20261205;



export interface MarketParams {
  T: number;
  sigma: [number, number, number, number, number];
  rho12: number;
  rho14: number;
  /** Monthly Sharpe ratios of TIDE and BALLAST. */
  sharpeTide: number;
  sharpeBallast: number;
  idioSd: [number, number];
}

export const MARKET: MarketParams = {
  T: 600,
  sigma: [0.045, 0.04, 0.03, 0.02, 0.03],
  rho12: 0.75,
  rho14: 0.6,
  sharpeTide: 0.25,
  sharpeBallast: 0.18,
  idioSd: [0.01, 0.02],
};

export const FACTOR_NAMES = ['TIDE', 'SWELL', 'DRIFT', 'GALE', 'BALLAST'] as const;
export const HULLS = ['Skiff', 'Sloop', 'Ketch', 'Brig', 'Barque'] as const;
export const PAINTS = ['Amber', 'Coral', 'Jade', 'Slate', 'Ochre'] as const;

/** Population Σ_f, b and λ = Σ_f b of the monthly market. */
export function marketTruth(p: MarketParams = MARKET) {
  const [s1, s2, s3, s4, s5] = p.sigma;
  // loadings of each factor on z1..z5
  const L = [
    [s1, 0, 0, 0, 0],
    [s2 * p.rho12, s2 * Math.sqrt(1 - p.rho12 ** 2), 0, 0, 0],
    [0, 0, s3, 0, 0],
    [s4 * p.rho14, 0, 0, s4 * Math.sqrt(1 - p.rho14 ** 2), 0],
    [0, 0, 0, 0, s5],
  ];
  const sigmaF = L.map((a) => L.map((c) => a.reduce((s, x, j) => s + x * c[j]!, 0)));
  // λ_TIDE = σ1² b1 + σ14 b4 with b4 = −σ14 b1 / σ4²  ⇒  λ_TIDE = b1 (σ1² − σ14²/σ4²)
  const lambdaTide = p.sharpeTide * s1;
  const s14 = sigmaF[0]![3]!;
  const b1 = lambdaTide / (s1 * s1 - (s14 * s14) / (s4 * s4));
  const b4 = (-s14 * b1) / (s4 * s4);
  const b5 = (p.sharpeBallast * s5) / (s5 * s5);
  const b = [b1, 0, 0, b4, b5];
  const lambda = sigmaF.map((row) => row.reduce((s, x, j) => s + x * b[j]!, 0));
  return { L, sigmaF, b, lambda };
}

export interface GeneratedLibrary {
  header: string[];
  dates: string[];
  columns: number[][];
}

function monthDates(startYear: number, T: number): string[] {
  return Array.from({ length: T }, (_, t) => `${startYear + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')}`);
}

/** The monthly "Harbour market" library in decimals (columns in header order, without date). */
export function generateMarket(seed = DEMO_SEED, p: MarketParams = MARKET): GeneratedLibrary & { betas: number[][] } {
  const rnd = mulberry32(seed);
  const z = normals(rnd);
  const { L, lambda } = marketTruth(p);
  const T = p.T;
  const K = 5;
  // Test-portfolio betas: spread on every factor so each column of C carries information.
  const betas: number[][] = [];
  const idio: number[] = [];
  for (let h = 0; h < 5; h++) {
    for (let c = 0; c < 5; c++) {
      betas.push([
        0.55 + 0.2 * h + 0.1 * (rnd() - 0.5),
        -0.6 + 0.3 * c + 0.2 * (rnd() - 0.5),
        -0.7 + 1.4 * rnd(),
        -1.5 + 3 * rnd(),
        -0.5 + 1.4 * rnd(),
      ]);
      idio.push(p.idioSd[0] + (p.idioSd[1] - p.idioSd[0]) * rnd());
    }
  }
  const factors: number[][] = FACTOR_NAMES.map(() => []);
  const assets: number[][] = betas.map(() => []);
  const rf: number[] = [];
  for (let t = 0; t < T; t++) {
    const shocks = Array.from({ length: K }, () => z());
    const dev = L.map((row) => row.reduce((s, x, j) => s + x * shocks[j]!, 0)); // f − μ
    FACTOR_NAMES.forEach((name, k) => {
      const traded = name !== 'GALE';
      factors[k]!.push((traded ? lambda[k]! : 0) + dev[k]!);
    });
    const bill = Math.max(0.0002, 0.003 + 0.0015 * Math.sin((2 * Math.PI * t) / 240) + 0.0001 * z());
    rf.push(bill);
    betas.forEach((beta, i) => {
      const premium = beta.reduce((s, x, k) => s + x * lambda[k]!, 0);
      const move = beta.reduce((s, x, k) => s + x * dev[k]!, 0);
      assets[i]!.push(bill + premium + move + idio[i]! * z());
    });
  }
  const assetNames = HULLS.flatMap((h) => PAINTS.map((c) => `${h} ${c}`));
  return {
    header: [...assetNames, ...FACTOR_NAMES, 'RF'],
    dates: monthDates(1975, T),
    columns: [...assets, ...factors, rf],
    betas,
  };
}

/** The daily "Dockside daily" library in decimals: ~2 years of weekdays, 7 portfolios, 2 factors, RF. */
export function generateDaily(seed = DEMO_SEED + 1): GeneratedLibrary {
  const rnd = mulberry32(seed);
  const z = normals(rnd);
  const dates: string[] = [];
  for (let d = new Date(Date.UTC(2023, 0, 2)); dates.length < 520; d.setUTCDate(d.getUTCDate() + 1)) {
    const wd = d.getUTCDay();
    if (wd !== 0 && wd !== 6) dates.push(d.toISOString().slice(0, 10));
  }
  const names = ['Jetty North', 'Jetty South', 'Crane Row', 'Bollard Lane', 'Slipway', 'Chandlery', 'Drydock'];
  const sd = [0.011, 0.007]; // QUAYSIDE, NETTING daily sd
  const lam = [0.0004, 0.0001];
  const betas = names.map((_, i) => [0.6 + 0.12 * i + 0.1 * rnd(), -0.8 + 1.6 * rnd()]);
  const idio = names.map(() => 0.004 + 0.006 * rnd());
  const cols: number[][] = [...names.map(() => [] as number[]), [], [], []];
  for (let t = 0; t < dates.length; t++) {
    const dev = [sd[0]! * z(), sd[1]! * z()];
    const bill = 0.00012 + 0.00002 * Math.sin(t / 60);
    betas.forEach((b, i) => cols[i]!.push(bill + b[0]! * (lam[0]! + dev[0]!) + b[1]! * (lam[1]! + dev[1]!) + idio[i]! * z()));
    cols[names.length]!.push(lam[0]! + dev[0]!);
    cols[names.length + 1]!.push(lam[1]! + dev[1]!);
    cols[names.length + 2]!.push(bill);
  }
  // A few missing days in one portfolio (a closed market), to show how gaps look.
  for (const t of [100, 101, 333]) cols[4]![t] = NaN;
  return { header: [...names, 'QUAYSIDE', 'NETTING', 'RF'], dates, columns: cols };
}

export function toCsv(lib: GeneratedLibrary, scale: number, digits: number): string {
  const esc = (s: string) => (/[",;\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const lines = [['date', ...lib.header].map(esc).join(',')];
  lib.dates.forEach((d, t) => {
    lines.push([d, ...lib.columns.map((c) => (Number.isNaN(c[t]!) ? '' : (c[t]! * scale).toFixed(digits)))].join(','));
  });
  return `${lines.join('\n')}\n`;
}

export const DEMO_DIR = join(dirname(fileURLToPath(import.meta.url)), '..', 'assets', 'demo');
export const MARKET_FILE = 'harbour-market-monthly.csv';
export const DAILY_FILE = 'dockside-daily.csv';

function main(): void {
  mkdirSync(DEMO_DIR, { recursive: true });
  // Monthly in percent (4 decimals of a percent = 1e-6 in decimals); daily in decimals (7 places).
  writeFileSync(join(DEMO_DIR, MARKET_FILE), toCsv(generateMarket(), 100, 4));
  writeFileSync(join(DEMO_DIR, DAILY_FILE), toCsv(generateDaily(), 1, 7));
  const { b, lambda } = marketTruth();
  console.log('population b:', FACTOR_NAMES.map((n, k) => `${n}=${b[k]!.toFixed(3)}`).join(' '));
  console.log('population λ:', FACTOR_NAMES.map((n, k) => `${n}=${lambda[k]!.toFixed(5)}`).join(' '));
  console.log(`wrote ${MARKET_FILE} and ${DAILY_FILE} under assets/demo/`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) main();

/**
 * A seeded, invented economy for the runs/specs/review API tests, uploaded through the libraries API.
 *
 * Truth (by construction): the SDF is m = 1 − b (MKT − μ) with one factor. ECHO = 0.8·MKT + e is a
 * correlated factor that carries no extra information, so its true b is 0 while its premium
 * λ_ECHO = Cov(ECHO, MKT)·b ≠ 0 ("priced, not needed"). CLIMA is non-traded noise. COMBO = MKT + ECHO
 * exactly (collinear). GAPPY is a test asset with one missing value (2009-05). RF is a small
 * risk-free series; the assets are raw returns RF + excess.
 */
import { prng, monthLabels, uploadCsv, confirm } from './libraries-helpers';
import type { Agent } from './helpers';
import { jobResponseSchema, type Job } from '../../shared/jobs';
import { runResponseSchema, type Run } from '../../shared/runs';
import { subsetSweep, type SubsetSweepResult } from '../../lib/gmm/index';
import { estimateLedger, okOf } from '../gmm/helpers';
import type { LedgerResult } from '../../lib/gmm/index';

export const FIX_T = 240;
export const FIX_ASSETS = ['A01', 'A02', 'A03', 'A04', 'A05', 'A06', 'A07', 'A08', 'A09', 'A10'];
export const GAP_INDEX = 100;

export interface Fixture {
  dates: string[];
  /** name → values (decimals; NaN for missing). */
  cols: Record<string, number[]>;
  csv: string;
}

function gaussian(rnd: () => number): () => number {
  return () => {
    const u = Math.max(rnd(), 1e-12);
    const v = rnd();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
}

export function makeFixture(seed = 9): Fixture {
  const g = gaussian(prng(seed));
  const T = FIX_T;
  const dates = monthLabels(2001, T);
  const cols: Record<string, number[]> = {};
  const mkt: number[] = [];
  const e: number[] = [];
  const rf: number[] = [];
  for (let t = 0; t < T; t++) {
    mkt.push(0.01 + 0.04 * g());
    e.push(0.02 * g());
    rf.push(0.002 + 0.0002 * g());
  }
  FIX_ASSETS.forEach((name, i) => {
    const beta = 0.5 + 0.1 * i;
    const gamma = -1 + (2 * i) / (FIX_ASSETS.length - 1);
    // mean excess return beta·E[MKT]: priced by MKT alone; exposure to e is unpriced (mean zero)
    cols[name] = mkt.map((m, t) => rf[t] + beta * m + gamma * e[t] + 0.02 * g());
  });
  cols.GAPPY = mkt.map((m, t) => (t === GAP_INDEX ? NaN : rf[t] + 0.9 * m + 0.02 * g()));
  cols.MKT = mkt;
  cols.ECHO = mkt.map((m, t) => 0.8 * m + e[t]);
  cols.CLIMA = mkt.map(() => 0.01 * g());
  cols.COMBO = mkt.map((m, t) => m + cols.ECHO[t]);
  cols.RF = rf;
  const names = Object.keys(cols);
  const lines = [['date', ...names].join(',')];
  dates.forEach((d, t) => lines.push([d, ...names.map((n) => (Number.isNaN(cols[n][t]) ? '' : String(cols[n][t])))].join(',')));
  return { dates, cols, csv: `${lines.join('\n')}\n` };
}

export const FIX_KINDS: Record<string, { kind: 'asset' | 'factor' | 'rf'; traded?: boolean }> = {
  MKT: { kind: 'factor', traded: true },
  ECHO: { kind: 'factor', traded: true },
  CLIMA: { kind: 'factor', traded: false },
  COMBO: { kind: 'factor', traded: true },
  RF: { kind: 'rf' },
};

/** Uploads the fixture as a library (admin: shared; researcher: private). Returns the edition id. */
export async function uploadFixture(
  agent: Agent,
  fx: Fixture,
  opts: { name: string; visibility: 'private' | 'shared' },
  kinds: Record<string, { kind: 'asset' | 'factor' | 'rf'; traded?: boolean }> = FIX_KINDS,
): Promise<{ libraryId: number; editionId: number }> {
  const up = await uploadCsv(agent, fx.csv, 'invented-economy.csv');
  if (up.status !== 201) throw new Error(`upload failed ${up.status} ${JSON.stringify(up.body)}`);
  const series = (up.body.upload.columns as string[]).map((name) => ({ name, kind: kinds[name]?.kind ?? 'asset', traded: kinds[name]?.traded ?? false }));
  const r = await confirm(agent, up.body.upload.id, { name: opts.name, visibility: opts.visibility, units: 'decimal', series });
  if (r.status !== 201) throw new Error(`confirm failed ${r.status} ${JSON.stringify(r.body)}`);
  return { libraryId: r.body.library.id, editionId: r.body.edition.id };
}

/**
 * A wide invented economy for sweeps of more than 15 candidates: `assets` test assets W-A01…
 * priced by the first factor W01 (b ≠ 0), the other factors independent noise series (true b = 0),
 * every third of them non-traded; T = 240 months, no risk-free series (returns are excess).
 */
export function makeWideFixture(factors = 17, assets = 20, seed = 41): { fx: Fixture; kinds: Record<string, { kind: 'asset' | 'factor' | 'rf'; traded?: boolean }>; assets: string[]; factors: string[] } {
  const g = gaussian(prng(seed));
  const T = FIX_T;
  const dates = monthLabels(2001, T);
  const fNames = Array.from({ length: factors }, (_, k) => `W${String(k + 1).padStart(2, '0')}`);
  const aNames = Array.from({ length: assets }, (_, i) => `WA${String(i + 1).padStart(2, '0')}`);
  const cols: Record<string, number[]> = {};
  fNames.forEach((n, k) => (cols[n] = Array.from({ length: T }, () => (k === 0 ? 0.008 : 0.001) + 0.03 * g())));
  aNames.forEach((n, i) => {
    const beta = 0.4 + (1.2 * i) / assets;
    const noiseLoad = fNames.map((_, k) => (k === 0 ? 0 : 0.2 * g()));
    cols[n] = cols[fNames[0]].map((m, t) => beta * m + noiseLoad.reduce((s, c, k) => s + c * (cols[fNames[k]][t] - 0.001), 0) + 0.02 * g());
  });
  const names = [...aNames, ...fNames];
  const lines = [['date', ...names].join(',')];
  dates.forEach((d, t) => lines.push([d, ...names.map((n) => String(cols[n][t]))].join(',')));
  const kinds: Record<string, { kind: 'asset' | 'factor' | 'rf'; traded?: boolean }> = {};
  fNames.forEach((n, k) => (kinds[n] = { kind: 'factor', traded: k % 3 !== 2 }));
  return { fx: { dates, cols, csv: `${lines.join('\n')}\n` }, kinds, assets: aNames, factors: fNames };
}

export type WideFixture = ReturnType<typeof makeWideFixture>;

/**
 * lib/gmm's subsetSweep called directly on the wide economy's matrices, in one pass (no chunks),
 * with the options a default sweep job uses: the reference a sweep job's result must equal.
 */
export function directWideSweep(wide: WideFixture, cands: readonly string[]): SubsetSweepResult {
  return okOf(
    subsetSweep({
      returns: wide.fx.dates.map((_, t) => wide.assets.map((a) => wide.fx.cols[a][t])),
      factors: wide.fx.dates.map((_, t) => cands.map((f) => wide.fx.cols[f][t])),
      factorNames: [...cands],
      traded: cands.map((c) => wide.kinds[c].traded === true),
      options: { lags: 'auto', form: 'centred', factorMeansKnown: false, weighting: 'identity', level: 0.05, topPerSize: 5 },
    }),
  ).sweep;
}

/** A complete spec with the defaults spelled out. */
export function spec(over: Record<string, unknown> = {}) {
  return {
    assets: FIX_ASSETS,
    factors: ['MKT', 'ECHO'],
    nonTraded: [],
    stage: 'second',
    weighting: 'identity',
    lags: 'auto',
    form: 'centred',
    factorMeansKnown: false,
    level: 0.05,
    ...over,
  };
}

/** Polls the caller's outbox until a message whose subject matches arrives (mail is sent in the background). */
export async function waitForMail(agent: Agent, subject: RegExp, tries = 50): Promise<{ to: string; subject: string; text: string }> {
  for (let i = 0; i < tries; i++) {
    const r = await agent.get('/api/v1/auth/outbox');
    const m = (r.body.messages as { to: string; subject: string; text: string }[]).find((x) => subject.test(x.subject));
    if (m) return m;
    await new Promise((res) => setTimeout(res, 100));
  }
  throw new Error(`No mail matching ${subject}`);
}

/** A job by id through the API, parsed with the shared schema. */
export async function getJob(agent: Agent, id: number): Promise<Job> {
  const r = await agent.get(`/api/v1/jobs/${id}`).expect(200);
  return jobResponseSchema.parse(r.body).job as Job;
}

/** Polls a job every `pollMs` until `until` holds; throws after `ms`. */
export async function waitJob(agent: Agent, id: number, until: (j: Job) => boolean, ms = 60_000, pollMs = 50): Promise<Job> {
  const end = Date.now() + ms;
  for (;;) {
    const j = await getJob(agent, id);
    if (until(j)) return j;
    if (Date.now() > end) throw new Error(`job ${id} stuck: ${JSON.stringify({ ...j, result: undefined })}`);
    await new Promise((r) => setTimeout(r, pollMs));
  }
}

export const jobEnded = (j: Job) => !['queued', 'running'].includes(j.status);

/** Reads GET /runs/:id until the run is no longer queued or running (a heavy run's end). */
export async function waitRun(agent: Agent, id: number, ms = 60_000): Promise<Run> {
  const until = Date.now() + ms;
  for (;;) {
    const run = runResponseSchema.parse((await agent.get(`/api/v1/runs/${id}`).expect(200)).body).run;
    if (run.status !== 'queued' && run.status !== 'running') return run;
    if (Date.now() > until) throw new Error(`run ${id} still ${run.status} after ${ms} ms`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

/** The run's matrices, built from the generated values (raw returns minus RF). */
export function fixtureMatrices(fx: Fixture, factors: string[]): { returns: number[][]; F: number[][] } {
  const returns: number[][] = [];
  const F: number[][] = [];
  for (let i = 0; i < fx.dates.length; i++) {
    returns.push(FIX_ASSETS.map((n) => fx.cols[n][i] - fx.cols.RF[i]));
    F.push(factors.map((f) => fx.cols[f][i]));
  }
  return { returns, F };
}

/**
 * lib/gmm's ledger of the fixture's test assets (excess returns over RF, the whole sample) on
 * `factors`, all traded, with spec()'s default options: the reference a default run must equal.
 */
export function fixtureLedger(fx: Fixture, factors: string[]): LedgerResult {
  const { returns, F } = fixtureMatrices(fx, factors);
  return estimateLedger({
    assetNames: FIX_ASSETS,
    returns,
    factorNames: factors,
    factors: F,
    traded: factors.map(() => true),
    options: { stage: 'second', weighting: 'identity', lags: 'auto', form: 'centred', factorMeansKnown: false, level: 0.05 },
  });
}

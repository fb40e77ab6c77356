/**
 * From a run's frozen spec and its edition to lib/gmm's ledger input: the window, the risk-free
 * subtraction, the traded flags and the estimation options. Used by runs (server/services/runs.ts)
 * and by the deep checks of a run (server/services/jobs-input.ts), so a check estimates exactly what
 * its run did.
 */
import { KeelsonApiError } from '../../shared/errors';
import { resolveBasis, windowRange, type ModelSpec } from '../../shared/specs';
import type { LedgerBootstrapSettings, LedgerInput, LedgerOptions } from '../../lib/gmm/index';
import type { EditionData } from './edition-data';

/** Failure the data caused; stored on a failed run. */
export class RunDataError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'RunDataError';
  }
}

/**
 * Builds estimateLedger's input from a spec and an edition: window, risk-free subtraction,
 * traded flags. Throws RunDataError naming the series and first date of missing values.
 */
export function buildLedgerInput(spec: ModelSpec, data: EditionData, dropSetOverride?: string[]): { input: LedgerInput; dates: string[] } {
  const [from, to] = windowRange(data.dates, spec.window);
  const dates = data.dates.slice(from, to);
  const byName = new Map(data.series.map((s) => [s.name, s]));
  const values = (name: string) => {
    const s = byName.get(name);
    if (!s) throw new KeelsonApiError('unprocessable', `The edition has no series '${name}'`);
    return s.values.slice(from, to);
  };
  const used = [...spec.assets, ...spec.factors, ...(spec.rf ? [spec.rf] : [])];
  const gaps: { name: string; t: number }[] = [];
  for (const name of used) {
    const v = values(name);
    const t = v.findIndex((x) => x === null || x === undefined || !Number.isFinite(x));
    if (t >= 0) gaps.push({ name, t });
  }
  if (gaps.length > 0) {
    gaps.sort((a, b) => a.t - b.t);
    const list = gaps
      .slice(0, 5)
      .map((g) => `'${g.name}' first on ${dates[g.t]}`)
      .join('; ');
    const more = gaps.length > 5 ? ` and ${gaps.length - 5} more series` : '';
    throw new RunDataError(
      `Missing values in the window ${dates[0]} – ${dates[dates.length - 1]}: ${list}${more}. Choose a window without gaps or leave those series out.`,
    );
  }
  const rf = spec.rf ? (values(spec.rf) as number[]) : null;
  const assetCols = spec.assets.map((a) => {
    const v = values(a) as number[];
    return rf ? v.map((x, t) => x - rf[t]) : v;
  });
  const factorCols = spec.factors.map((f) => values(f) as number[]);
  const T = dates.length;
  const returns: number[][] = [];
  const factors: number[][] = [];
  for (let t = 0; t < T; t++) {
    returns.push(assetCols.map((c) => c[t]));
    factors.push(factorCols.map((c) => c[t]));
  }
  const dropSet = dropSetOverride ?? spec.dropSet;
  return {
    dates,
    input: {
      assetNames: spec.assets,
      returns,
      factorNames: spec.factors,
      factors,
      traded: spec.factors.map((f) => !spec.nonTraded.includes(f)),
      options: {
        ...runOptionsOf(spec),
        ...(dropSet && dropSet.length > 0 ? { dropSet } : {}),
        basis: resolveBasis(spec),
        ...(spec.bootstrap ? { bootstrap: bootstrapSettingsOf(spec.bootstrap) } : {}),
      },
    },
  };
}

/**
 * A spec's bootstrap settings as lib/gmm's LedgerBootstrapSettings, which are also the bootstrap
 * job's parameters (shared/jobs.ts bootstrapParamsSchema).
 */
export function bootstrapSettingsOf(b: NonNullable<ModelSpec['bootstrap']>): LedgerBootstrapSettings {
  return { draws: b.draws, scheme: b.scheme, ...(b.blockLength !== undefined ? { blockLength: b.blockLength } : {}), seed: b.seed };
}

/** The estimation options every check of a run shares with the run itself: written once, here. */
export function runOptionsOf(spec: ModelSpec): Pick<LedgerOptions, 'stage' | 'weighting' | 'lags' | 'form' | 'factorMeansKnown' | 'level'> {
  return { stage: spec.stage, weighting: spec.weighting, lags: spec.lags, form: spec.form, factorMeansKnown: spec.factorMeansKnown, level: spec.level };
}

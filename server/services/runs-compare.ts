/**
 * Compare two runs side by side, and — when they are nested on the same data — the drop test of
 * the smaller model against the larger.
 *
 * Nested means: same edition, same test assets, window, risk-free series and estimation options
 * (stage, first-stage weighting, lag, form, factor means), and the factor set of one a strict
 * subset of the other's. The test is the χ² difference with the larger model's second-stage
 * weighting (Newey and West 1987, International Economic Review), obtained from lib/gmm's
 * estimateLedger on the larger model with dropSet = the factors the smaller model lacks. For
 * first-stage runs the test is defined at the first stage too (methods.md): W* is the second
 * stage computed from the larger model's first-stage estimate, i.e. the larger spec estimated at
 * stage 'second' with the same first-stage weighting.
 *
 * Model comparison (any two factor sets, nested or not): on the same edition, test assets and
 * window, with every factor traded, the squared-Sharpe z test of θ̂_A − θ̂_B (model-compare.ts;
 * Barillas, Kan, Robotti and Shanken 2020), or for nested sets the joint spanning test of the
 * extra factors. A pair it does not apply to gets `sharpe: null` and the reason in
 * `sharpeRefusal`; with `require=sharpe` the request is refused (422) instead.
 *
 * The response also names each run's basis and the basis its verdicts rest on, with a note when
 * the two differ (the verdicts are then not like for like); the nested test does not depend on it.
 */
import type { Db } from '../db/client';
import type { User } from '../../shared/auth';
import type { CompareResponse, NestedTest, Run } from '../../shared/runs';
import type { ModelSpec } from '../../shared/specs';
import { KeelsonApiError } from '../../shared/errors';
import { buildLedgerInput, estimate, getRun, RunDataError } from './runs';
import { loadEditionData } from './edition-data';
import { compareFactorModels, refusedComparison, type ModelComparison } from './model-compare';

const sameSet = (a: readonly string[], b: readonly string[]) => a.length === b.length && a.every((x) => b.includes(x));

function whyNotComparable(a: Run, b: Run): string | null {
  if (a.editionId !== b.editionId) return 'The runs use different library editions.';
  const sa: ModelSpec = a.spec;
  const sb: ModelSpec = b.spec;
  if (!sameSet(sa.assets, sb.assets)) return 'The runs use different test assets.';
  if ((a.result?.T ?? -1) !== (b.result?.T ?? -2) || (sa.window?.start ?? '') !== (sb.window?.start ?? '') || (sa.window?.end ?? '') !== (sb.window?.end ?? ''))
    return 'The runs use different sample windows.';
  if ((sa.rf ?? '') !== (sb.rf ?? '')) return 'The runs treat the risk-free rate differently.';
  for (const k of ['stage', 'weighting', 'lags', 'form', 'factorMeansKnown'] as const)
    if (sa[k] !== sb[k]) return `The runs differ in their ${k === 'factorMeansKnown' ? 'factor-mean handling' : k === 'lags' ? 'HAC lag' : k}.`;
  const aTraded = sa.factors.filter((f) => !sa.nonTraded.includes(f));
  const bTraded = sb.factors.filter((f) => !sb.nonTraded.includes(f));
  for (const f of sa.factors) if (sb.factors.includes(f) && aTraded.includes(f) !== bTraded.includes(f)) return `The runs disagree on whether '${f}' is traded.`;
  return null;
}

export function nestedTest(db: Db, a: Run, b: Run): NestedTest {
  const none = (reason: string): NestedTest => ({ nested: false, reason, smallerRunId: null, largerRunId: null, dropped: [], test: null });
  if (a.status !== 'finished' || b.status !== 'finished') return none('Both runs must have finished.');
  const why = whyNotComparable(a, b);
  if (why) return none(why);
  let small: Run;
  let large: Run;
  if (a.spec.factors.length < b.spec.factors.length) [small, large] = [a, b];
  else if (b.spec.factors.length < a.spec.factors.length) [small, large] = [b, a];
  else return none(sameSet(a.spec.factors, b.spec.factors) ? 'The runs have the same factors.' : 'Neither factor set contains the other.');
  if (!small.spec.factors.every((f) => large.spec.factors.includes(f))) return none('The smaller factor set is not a subset of the larger.');
  const dropped = large.spec.factors.filter((f) => !small.spec.factors.includes(f));
  const base = { nested: true, smallerRunId: small.id, largerRunId: large.id, dropped };
  const data = loadEditionData(db, large.editionId);
  // W* for a first-stage run: the second stage computed from its first-stage estimate. The drop
  // test does not depend on the basis, so the re-estimate asks for none (no bootstrap settings).
  const { bootstrap: _ignored, ...rest } = large.spec;
  void _ignored;
  const specForDrop: ModelSpec = { ...rest, stage: large.spec.stage === 'first' ? 'second' : large.spec.stage, basis: 'standard' };
  const out = estimate(specForDrop, data, dropped);
  if (!out.ok) return { ...base, reason: `The larger model could not be re-estimated: ${out.error}`, test: null };
  const t = out.result.jointDrop?.chi2Drop ?? null;
  return { ...base, reason: t ? null : 'The drop test could not be computed.', test: t ? { stat: t.stat, df: t.df, p: t.p } : null };
}

/**
 * The squared-Sharpe comparison of two runs' factor sets (see the module comment). The estimation
 * options (stage, weighting, form) do not enter: θ̂ depends on the factors alone. The HAC lag is
 * the runs' own, so it must be the same in both.
 */
export function sharpeComparison(db: Db, a: Run, b: Run): ModelComparison {
  if (a.status !== 'finished' || b.status !== 'finished' || !a.result || !b.result) return refusedComparison('Both runs must have finished before their models can be compared.', 'conflict');
  if (a.editionId !== b.editionId)
    return refusedComparison(
      `The runs use different library editions (run #${a.id}: ${a.libraryName} edition ${a.editionNumber}; run #${b.id}: ${b.libraryName} edition ${b.editionNumber}). The Sharpe comparison needs both models on the same data: run one model again on the other's edition.`,
    );
  if (!sameSet(a.spec.assets, b.spec.assets)) return refusedComparison(`The runs use different test assets (run #${a.id}: ${a.spec.assets.length}, run #${b.id}: ${b.spec.assets.length}). Compare models estimated on the same test assets.`);
  const win = (r: Run) => `${r.spec.window?.start ?? 'first period'} – ${r.spec.window?.end ?? 'last period'}`;
  if (a.result.T !== b.result.T || win(a) !== win(b))
    return refusedComparison(`The runs use different sample windows (run #${a.id}: ${win(a)}, T = ${a.result.T}; run #${b.id}: ${win(b)}, T = ${b.result.T}). The test needs the same periods for both models.`);
  if (a.result.lags !== b.result.lags)
    return refusedComparison(`The runs use different HAC lags (${a.result.lags} and ${b.result.lags}); the test's standard error needs one lag for both models.`);
  for (const r of [a, b]) {
    const nt = r.spec.factors.find((f) => r.spec.nonTraded.includes(f));
    if (nt)
      return refusedComparison(
        `'${nt}' in run #${r.id} is not a traded factor. The squared Sharpe ratio compares models whose factors are all excess returns (long-short or market-minus-cash portfolios); compare such models by how they price the test assets (J, HJ distance, pricing errors) instead.`,
      );
  }
  if (sameSet(a.spec.factors, b.spec.factors)) return refusedComparison('The two runs have the same factors: there is no model comparison to make.');
  const union = [...new Set([...a.spec.factors, ...b.spec.factors])];
  let factors: readonly (readonly number[])[];
  try {
    factors = buildLedgerInput({ ...a.spec, factors: union, nonTraded: [], dropSet: undefined }, loadEditionData(db, a.editionId)).input.factors;
  } catch (e) {
    if (e instanceof RunDataError || e instanceof KeelsonApiError) return refusedComparison(e.message);
    throw e;
  }
  return compareFactorModels({ factors, factorNames: union, traded: union.map(() => true), lags: a.result.lags, modelA: a.spec.factors, modelB: b.spec.factors });
}

export function compareRuns(db: Db, user: User, aId: number, bId: number, require?: 'sharpe'): CompareResponse {
  if (aId === bId) throw new KeelsonApiError('bad_request', 'Pick two different runs to compare');
  const a = getRun(db, user, aId);
  const b = getRun(db, user, bId);
  const basisOf = (r: Run) => (r.result ? { basis: r.result.basis, verdictBasis: r.result.verdictBasis } : null);
  const ba = basisOf(a);
  const bb = basisOf(b);
  let basisNote: string | null = null;
  if (ba && bb && ba.verdictBasis !== bb.verdictBasis)
    basisNote = `The verdicts rest on different bases: run #${a.id} on the ${ba.verdictBasis} basis, run #${b.id} on the ${bb.verdictBasis} basis; compare them with that in mind.`;
  else if (ba && bb && (ba.basis !== ba.verdictBasis || bb.basis !== bb.verdictBasis))
    basisNote = `A requested basis is still pending: ${[a, b]
      .filter((r) => r.result && r.result.basis !== r.result.verdictBasis)
      .map((r) => `run #${r.id} asks for ${r.result!.basis} and shows ${r.result!.verdictBasis} until it is ready`)
      .join('; ')}.`;
  const model = sharpeComparison(db, a, b);
  if (require === 'sharpe' && model.sharpeRefusal) throw new KeelsonApiError(model.sharpeRefusal.code === 'conflict' ? 'conflict' : 'unprocessable', model.sharpeRefusal.message);
  return { a, b, nested: nestedTest(db, a, b), bases: { a: ba, b: bb }, basisNote, ...model };
}

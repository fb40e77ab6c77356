/**
 * The model-comparison test between two factor sets on the same periods, in the API's shape
 * (shared/runs.ts): pure, used by the compare service and by the command line (`--versus`).
 *
 * Non-nested models with traded factors: the difference of the factors' squared Sharpe ratios
 * θ̂_A − θ̂_B with its HAC standard error, z and two-sided p (lib/gmm sharpe.ts; Barillas and
 * Shanken 2017; Barillas, Kan, Robotti and Shanken 2020). When one factor set contains the other,
 * equal θ is the hypothesis that the extra factors are spanned by the smaller set, and the z test
 * degenerates; the joint spanning test of the extra factors (Huberman and Kandel 1987) is given
 * instead, with the reason. Refusals (a non-traded factor, identical sets, shapes) come back as an
 * error-envelope body `{ code, message }`, never as a thrown error.
 */
import { compareModels, GmmInputError } from '../../lib/gmm/index';
import type { SharpeSpanning, SharpeTest } from '../../shared/runs';

export interface ModelComparison {
  sharpe: SharpeTest | null;
  sharpeSpanning: SharpeSpanning | null;
  sharpeRefusal: { code: string; message: string } | null;
}

export const refusedComparison = (message: string, code = 'unprocessable'): ModelComparison => ({ sharpe: null, sharpeSpanning: null, sharpeRefusal: { code, message } });

/**
 * Compares model A (factor names `modelA`) with model B on the T×K factor matrix `factors` whose
 * columns are `factorNames` (every factor either model uses), with traded flags and the HAC lag.
 */
export function compareFactorModels(input: {
  factors: readonly (readonly number[])[];
  factorNames: readonly string[];
  traded: readonly boolean[];
  lags: number | 'auto';
  modelA: readonly string[];
  modelB: readonly string[];
}): ModelComparison {
  let r: ReturnType<typeof compareModels>;
  try {
    r = compareModels(input);
  } catch (e) {
    if (e instanceof GmmInputError) return refusedComparison(e.message);
    throw e;
  }
  if (!r.ok) return refusedComparison(r.message, r.code);
  if (r.kind === 'sharpe') {
    const { a, b, diff, se, z, p, shared, T, lags } = r;
    return { sharpe: { a: { ...a, factors: [...a.factors] }, b: { ...b, factors: [...b.factors] }, diff, se, z, p, shared: [...shared], T, lags }, sharpeSpanning: null, sharpeRefusal: null };
  }
  if (r.kind === 'nested') {
    const s = r.spanning;
    return {
      sharpe: null,
      sharpeSpanning: {
        reason: r.reason,
        a: { ...r.a, factors: [...r.a.factors] },
        b: { ...r.b, factors: [...r.b.factors] },
        larger: r.larger,
        factors: [...s.factors],
        on: [...s.on],
        alpha: [...s.alpha],
        stat: s.stat,
        df: s.df,
        p: s.p,
        shared: [...r.shared],
        T: r.T,
        lags: r.lags,
      },
      sharpeRefusal: null,
    };
  }
  return refusedComparison(r.message, r.kind);
}

/**
 * A run's estimation as one pure function (lib/gmm only: no database, no Express), shared by the
 * synchronous path of POST /runs (server/services/runs.ts) and the chunk task 'estimate'
 * (server/jobs/tasks.ts) that the embedded pool and the queue workers run for a heavy run. Both
 * paths call exactly this on exactly the same input, so a heavy run's numbers are the ones the
 * synchronous path gives.
 *
 * The statistics are lib/gmm's: estimateLedger (Hansen 1982, GMM; Cochrane 2005 ch. 13 for the
 * SDF form) and, when the spec asks for bootstrap p-values, prepareBootstrap's acceptance check.
 */
import { estimateLedger, GmmInputError, prepareBootstrap, type BootstrapInput, type LedgerInput, type LedgerResult } from '../../lib/gmm/index';
import { gmmFailureMessage } from '../../shared/gmm-messages';
import type { GmmFailureCode } from '../../lib/gmm/errors';

/** Input mistakes of lib/gmm that mean the request (not the data) is wrong. */
export const REQUEST_ERROR_CODES: ReadonlySet<string> = new Set(['invalid-option', 'invalid-lags', 'too-few-assets', 'unknown-factor', 'duplicate-name', 'length-mismatch', 'empty-input']);

/** What the estimation needs: lib/gmm's ledger input, the window's dates (for messages), the bootstrap to check. */
export interface RunEstimateInput {
  readonly input: LedgerInput;
  readonly dates: readonly string[];
  /** The bootstrap the spec asks for: lib/gmm must accept it (checked only when the ledger finished). */
  readonly bootstrap?: BootstrapInput;
}

/**
 * The estimation's outcome:
 * - `ok: true` with the ledger;
 * - `ok: false, kind: 'data'`: the data refuse the model (typed numerical failure `code`, or an
 *   input error lib/gmm found in the data, e.g. a constant series); the run is stored as failed;
 * - `ok: false, kind: 'request'`: the request is wrong (lib/gmm's own option checks, or a bootstrap
 *   it refuses); the synchronous path answers 422 and writes nothing, a queued run is marked failed.
 */
export type RunEstimate =
  | { readonly ok: true; readonly result: LedgerResult }
  | {
      readonly ok: false;
      readonly kind: 'data' | 'request';
      /** lib/gmm's code: a GmmFailureCode for a numerical failure, a GmmInputError code otherwise. */
      readonly code: GmmFailureCode | string;
      readonly error: string;
      /** Which step refused: the ledger, or the bootstrap the spec asks for. */
      readonly from: 'ledger' | 'bootstrap';
    };

/**
 * How much a run costs, ≈ T·N²·K: the N×N moment products over T periods (T·N²) are redone for
 * the fit and each of the K drop tests. Compared with KEELSON_HEAVY_RUN_COST to decide whether a
 * run is estimated in the request (201) or queued (202).
 */
export function runCost(input: Pick<LedgerInput, 'returns' | 'assetNames' | 'factorNames'>): number {
  const T = input.returns.length;
  const N = input.assetNames.length;
  const K = input.factorNames.length;
  return T * N * N * K;
}

/** Estimates the run's ledger (and checks its bootstrap); never throws for data or request mistakes. */
export function estimateRun(task: RunEstimateInput): RunEstimate {
  try {
    const out = estimateLedger(task.input);
    if (!out.ok) return { ok: false, kind: 'data', code: out.code, error: gmmFailureMessage(out), from: 'ledger' };
    if (task.bootstrap) {
      try {
        const prepared = prepareBootstrap(task.bootstrap);
        // a typed numerical failure of the original fit under the bootstrap's settings: the
        // request's bootstrap cannot run on these data (the 422 a deep-check request gets too)
        if (!prepared.ok) return { ok: false, kind: 'request', code: prepared.code, error: gmmFailureMessage(prepared), from: 'bootstrap' };
      } catch (e) {
        if (e instanceof GmmInputError) return { ok: false, kind: 'request', code: e.code, error: e.message, from: 'bootstrap' };
        throw e;
      }
    }
    return { ok: true, result: out.ledger };
  } catch (e) {
    if (!(e instanceof GmmInputError)) throw e;
    if (REQUEST_ERROR_CODES.has(e.code)) return { ok: false, kind: 'request', code: e.code, error: e.message, from: 'ledger' };
    const when = e.row !== undefined && task.dates[e.row] ? ` (date ${task.dates[e.row]})` : '';
    return { ok: false, kind: 'data', code: e.code, error: `${e.message}${when}`, from: 'ledger' };
  }
}

/**
 * The columns written with a run's result: the JSON text and its N, K, T as plain columns, so run
 * lists read the shape without parsing any result. Every writer of `runs.result` goes through
 * here (creating a run, merging its own bootstrap), so the columns never drift from the JSON.
 */
import type { LedgerResult } from '../../lib/gmm/index';

export interface RunResultColumns {
  result: string | null;
  nAssets: number | null;
  nFactors: number | null;
  nPeriods: number | null;
}

export function runResultColumns(result: LedgerResult | null): RunResultColumns {
  return result
    ? { result: JSON.stringify(result), nAssets: result.N, nFactors: result.K, nPeriods: result.T }
    : { result: null, nAssets: null, nFactors: null, nPeriods: null };
}

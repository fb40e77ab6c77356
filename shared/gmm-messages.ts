/**
 * User-facing wording for the estimation library's codes, in one place for the server, the CLI
 * and the app: typed numerical failures (`GmmFailure.code`, lib/gmm/errors.ts) and ledger warnings
 * (`LedgerWarning.code`). The library's own `message` keeps the detail (matrix, names, numbers)
 * and is appended to the mapped wording.
 */
import type { GmmFailure, GmmFailureCode, LedgerWarning, LedgerWarningCode } from '../lib/gmm/errors';

/** Lead-in for each numerical failure code. */
export const GMM_FAILURE_MESSAGES: Readonly<Record<GmmFailureCode, string>> = {
  singular: 'The estimation could not be solved',
  'not-converged': 'The estimation did not converge',
  'not-defined': 'The statistic is not defined for these data',
};

/** The user message of a typed failure: the code's lead-in and the library's detail. */
export function gmmFailureMessage(f: Pick<GmmFailure, 'code' | 'message'>): string {
  return `${GMM_FAILURE_MESSAGES[f.code]}: ${f.message}`;
}

/** Short headings of the ledger warnings (the text itself carries the run's numbers and names). */
export const LEDGER_WARNING_TITLES: Readonly<Record<LedgerWarningCode, string>> = {
  'small-sample': 'Small sample',
  'not-converged': 'Not converged',
  'robust-failed': 'Robust SEs unavailable',
  'drop-singular': 'Drop tests unavailable',
  'drop-first-stage': 'Drop-test weighting',
  'thin-beta-failed': 'Thin-beta test unavailable',
  'thin-beta': 'Thin beta',
  'spanning-failed': 'Spanning check unavailable',
  'spanning-non-traded-regressors': 'Spanning regressors',
  'hj-failed': 'HJ distance unavailable',
  'grs-failed': 'GRS unavailable',
  'grs-not-traded': 'GRS not reported',
  'fama-macbeth-failed': 'Fama–MacBeth unavailable',
  'joint-spanning-not-traded': 'Joint spanning not reported',
  note: 'Note',
};

/** The text shown for a ledger warning (the same wherever a ledger is shown or exported). */
export function ledgerWarningText(w: LedgerWarning): string {
  return w.message;
}

/**
 * The one failure model of the estimation library.
 *
 * Caller mistakes throw `GmmInputError` (bad shapes, missing values, a constant or collinear
 * series, a test asked of a non-traded factor, an option out of range). It carries a
 * machine-readable `code` and, where it applies, the offending `series` name and 0-based `row`.
 *
 * Expected numerical outcomes come back, never thrown, as one typed result shape:
 *   `{ ok: true, ...value } | { ok: false, code, message }` (`GmmResult<T>`, failure `GmmFailure`),
 * with `code` one of `GmmFailureCode` ('singular': a matrix that must be inverted is not;
 * 'not-converged'; 'not-defined': the statistic does not exist for these inputs, e.g. a test of
 * the non-traded factors inside a ledger, or R²_oos with zero hold-out means).
 * Warnings of the ledger carry a code (`LedgerWarningCode`) and a text. User-facing wording for
 * every code lives in one place: shared/gmm-messages.ts. No function of this library returns NaN
 * or ±Infinity in a result.
 */

export type GmmInputErrorCode =
  | 'empty-input'
  | 'ragged-row'
  | 'non-finite'
  | 'length-mismatch'
  | 'duplicate-name'
  | 'too-few-periods'
  | 'too-few-assets'
  | 'invalid-lags'
  | 'invalid-option'
  | 'constant-series'
  | 'collinear-factor'
  | 'collinear-asset'
  | 'not-traded'
  | 'unknown-factor';

export class GmmInputError extends Error {
  readonly code: GmmInputErrorCode;
  /** Name of the offending series, when one is to blame. */
  readonly series?: string;
  /** 0-based row index (period) of the offending value, when one is to blame. */
  readonly row?: number;

  constructor(code: GmmInputErrorCode, message: string, detail: { series?: string; row?: number } = {}) {
    super(message);
    this.name = 'GmmInputError';
    this.code = code;
    if (detail.series !== undefined) this.series = detail.series;
    if (detail.row !== undefined) this.row = detail.row;
  }
}

/** Codes of the expected numerical outcomes (see the module comment). */
export const GMM_FAILURE_CODES = ['singular', 'not-converged', 'not-defined'] as const;
export type GmmFailureCode = (typeof GMM_FAILURE_CODES)[number];

/** The failure half of every typed result. */
export interface GmmFailure {
  readonly ok: false;
  readonly code: GmmFailureCode;
  /** What failed, in the library's words (detail for logs and the mapped user message). */
  readonly message: string;
  /** Which matrix could not be inverted, when `code` is 'singular' and one is to blame. */
  readonly matrix?: string;
}

/** A typed result: the value's fields beside `ok: true`, or a {@link GmmFailure}. */
export type GmmResult<T extends object> = (T & { readonly ok: true }) | GmmFailure;

/** The value of a successful result without its `ok` field (for embedding in a ledger), or null on failure. */
export function okValue<T extends object>(r: GmmResult<T>): T | null {
  if (!r.ok) return null;
  const { ok, ...value } = r;
  void ok;
  return value as unknown as T;
}

/** Build a {@link GmmFailure}. */
export function gmmFailure(code: GmmFailureCode, message: string, matrix?: string): GmmFailure {
  return matrix === undefined ? { ok: false, code, message } : { ok: false, code, message, matrix };
}

/** Codes of the ledger's warnings (each warning is `{ code, message }`). */
export const LEDGER_WARNING_CODES = [
  'small-sample',
  'not-converged',
  'robust-failed',
  'drop-singular',
  'drop-first-stage',
  'thin-beta-failed',
  'thin-beta',
  'spanning-failed',
  'spanning-non-traded-regressors',
  'hj-failed',
  'grs-failed',
  'grs-not-traded',
  'fama-macbeth-failed',
  'joint-spanning-not-traded',
  'note',
] as const;
export type LedgerWarningCode = (typeof LEDGER_WARNING_CODES)[number];

/** A ledger warning: a code for programs and a text with the run's numbers and names. */
export interface LedgerWarning {
  readonly code: LedgerWarningCode;
  readonly message: string;
}

/**
 * Typed errors of the estimation library.
 *
 * `GmmInputError` is thrown for caller mistakes (bad shapes, missing values, a constant or
 * collinear series, a test asked of a non-traded factor, an option out of range). It carries a
 * machine-readable `code` and, where it applies, the offending `series` name and 0-based `row`.
 *
 * `GmmNumericalError` is thrown only by the top-level `estimateLedger` when the core GMM system
 * is singular after validation (the per-module estimators return typed `{ ok: false }` results
 * instead). No function of this library returns NaN or ±Infinity in a result.
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

export type GmmNumericalErrorCode = 'singular';

export class GmmNumericalError extends Error {
  readonly code: GmmNumericalErrorCode;
  constructor(code: GmmNumericalErrorCode, message: string) {
    super(message);
    this.name = 'GmmNumericalError';
    this.code = code;
  }
}

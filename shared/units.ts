/**
 * Units detection for return libraries: are the numbers decimals (0.03 = 3%) or percent (3 = 3%)?
 * Shared by the upload (shared/return-csv.ts, the one CSV reader) and the command line (`keelson estimate`),
 * so both decide the same way. Pure: no I/O.
 *
 * Rule: the typical size of a column is the median of |x| over its finite values; the file's scale
 * is the median of the columns' typical sizes; above PERCENT_SCALE the file reads as percent
 * (monthly decimal returns sit near 0.03, percent near 3).
 */
import type { Units } from './libraries';

/** Median |x| above which a column looks like percent. */
export const PERCENT_SCALE = 0.15;
/** How far (in multiples) a column's scale must sit from the others' to be flagged. */
export const SCALE_RATIO = 30;

function medianSorted(s: Float64Array): number {
  const h = s.length >> 1;
  return s.length % 2 ? s[h]! : (s[h - 1]! + s[h]!) / 2;
}

/** Median |x| of the finite values (NaN = missing), null when there are none. */
export function typicalSize(v: ArrayLike<number>): number | null {
  const a: number[] = [];
  for (let i = 0; i < v.length; i++) if (Number.isFinite(v[i]!)) a.push(Math.abs(v[i]!));
  if (a.length === 0) return null;
  return medianSorted(Float64Array.from(a).sort());
}

export interface UnitsDetection {
  readonly units: Units;
  /** The file's scale: median of the columns' typical sizes (0 when none is known). */
  readonly pooled: number;
  /** Each column's typical size (null: no values). */
  readonly scales: readonly (number | null)[];
}

/** Detect the units of a set of columns (each in the file's own units, NaN for missing). */
export function detectUnits(columns: readonly ArrayLike<number>[]): UnitsDetection {
  const scales = columns.map(typicalSize);
  const known = scales.filter((s): s is number => s !== null && s > 0);
  const pooled = known.length ? medianSorted(Float64Array.from(known).sort()) : 0;
  return { units: pooled > PERCENT_SCALE ? 'percent' : 'decimal', pooled, scales };
}

/**
 * How Keelson prints numbers for people: one rule for the screen and the exports (LaTeX), pure
 * functions with no React, so the app, the server and the command line share them.
 *
 * - Fixed decimals per quantity (`DECIMALS`): b 3, t 2, p 3, χ² 2, λ and α in percent 3.
 * - A true minus sign (U+2212 on screen, `$-$` in LaTeX); a value that rounds to zero prints
 *   without a sign.
 * - p-values below 0.001 print as "< 0.001" (three decimals cannot show them; "0.000" would
 *   read as impossible).
 * - λ and α are stored as decimals per period and shown in percent (0.01282 → 1.282 %).
 */

/** Decimals per quantity, as on the factor ledger. */
export const DECIMALS = { b: 3, t: 2, p: 3, chi2: 2, pct: 3, hj: 4 } as const;

/** The smallest p printed as a number; smaller ones print as "< 0.001". */
export const P_FLOOR = 0.001;

export const MINUS = '\u2212';

export interface FormatStyle {
  /** Minus sign (screen: U+2212; LaTeX: `$-$`). */
  readonly minus?: string;
  /** Text for a missing or non-finite value (screen: "—"; LaTeX: "--"). */
  readonly missing?: string;
  /** "Less than" sign before P_FLOOR (screen: "< "; LaTeX: `$<$`). */
  readonly less?: string;
  /**
   * formatP only: the significance level a star marks (p < level). When three decimals would round
   * a p below the level up to it (0.0498 → "0.050" beside a star at 5%), more decimals are printed
   * until the text reads below the level ("0.0498").
   */
  readonly level?: number;
}

/** A number with fixed decimals and a true minus sign; null/undefined/non-finite → `missing`. */
export function formatFixed(x: number | null | undefined, decimals: number, style: FormatStyle = {}): string {
  const { minus = MINUS, missing = '\u2014' } = style;
  if (x === null || x === undefined || !Number.isFinite(x)) return missing;
  const s = Math.abs(x).toFixed(decimals);
  return x < 0 && Number(s) !== 0 ? `${minus}${s}` : s;
}

/** A decimal per period shown in percent (× 100) with `decimals` places (the % sign is the caller's). */
export function formatPercent(x: number | null | undefined, decimals: number = DECIMALS.pct, style: FormatStyle = {}): string {
  return formatFixed(x === null || x === undefined ? x : x * 100, decimals, style);
}

/**
 * A p-value: "< 0.001" below P_FLOOR, else three decimals — or, with `style.level`, as many more
 * (up to six) as it takes for a p below the level not to print as the level or above it; a p even
 * closer under the level prints as "< level" (e.g. "< 0.050").
 */
export function formatP(p: number | null | undefined, style: FormatStyle = {}): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return formatFixed(p, DECIMALS.p, style);
  if (p < P_FLOOR) return `${style.less ?? '< '}${P_FLOOR.toFixed(DECIMALS.p)}`;
  let d: number = DECIMALS.p;
  const level = style.level;
  if (level !== undefined && p < level) {
    while (d < 6 && Number(p.toFixed(d)) >= level) d++;
    if (Number(p.toFixed(d)) >= level) return `${style.less ?? '< '}${formatFixed(level, DECIMALS.p, style)}`;
  }
  return formatFixed(p, d, style);
}

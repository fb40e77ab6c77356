/**
 * Where a hold-out starts, from a date label: pure, shared by the hold-out deep check
 * (jobs-input.ts) and the command line (`--holdout-from`).
 */

/**
 * The first hold-out period for `from` (YYYY-MM or YYYY-MM-DD): the first period on or after it,
 * compared at the precision of the sample's labels (a day inside a month of a monthly sample
 * picks that month). A date on or before the first period, or after the last, is outside the
 * sample: there would be nothing to estimate on, or nothing to price.
 * @returns the 0-based index, or the message that refuses it.
 */
export function splitIndexOf(dates: readonly string[], from: string): { index: number } | { error: string } {
  if (dates.length === 0) return { error: 'The sample has no periods.' };
  const key = from.length > dates[0].length ? from.slice(0, dates[0].length) : from;
  if (key <= dates[0] || key > dates[dates.length - 1])
    return {
      error: `The split date ${from} is outside the run's estimation sample (${dates[0]} – ${dates[dates.length - 1]}): the hold-out must start after the first period and no later than the last.`,
    };
  return { index: dates.findIndex((d) => d >= key) };
}

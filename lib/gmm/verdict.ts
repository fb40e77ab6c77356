/**
 * The factor ledger's verdict: is factor k needed (b̂_k significant) and priced (λ̂_k
 * significant) at the chosen level?
 *
 * | b̂_k significant | λ̂_k significant | verdict |
 * | yes | yes | needed and priced |
 * | no  | yes | priced, not needed |
 * | yes | no  | needed, not priced alone |
 * | no  | no  | neither |
 *
 * Significance: two-sided p-value below `level` (the Wald z-test on b̂_k and the z-test on λ̂_k).
 * The distinction follows Cochrane, J. H. (2005), Asset Pricing (rev. ed.), Princeton University
 * Press, ch. 13, and Kan, Robotti and Shanken (2013, Journal of Finance).
 *
 * @example
 * factorVerdict(0.01, 0.001, 0.05) // → 'needed and priced'
 * factorVerdict(0.40, 0.001, 0.05) // → 'priced, not needed'
 */
export type Verdict = 'needed and priced' | 'priced, not needed' | 'needed, not priced alone' | 'neither';

export const VERDICTS: readonly Verdict[] = ['needed and priced', 'priced, not needed', 'needed, not priced alone', 'neither'];

export function factorVerdict(pB: number, pLambda: number, level: number): Verdict {
  const needed = pB < level;
  const priced = pLambda < level;
  if (needed && priced) return 'needed and priced';
  if (priced) return 'priced, not needed';
  if (needed) return 'needed, not priced alone';
  return 'neither';
}

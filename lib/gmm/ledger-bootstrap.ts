/**
 * Merge bootstrap p-values into a finished factor ledger (pure; the ledger's estimates are not
 * recomputed).
 *
 * For each factor k: bootstrap.pB = the bootstrap-t p of b_k = 0, bootstrap.pLambda = the
 * bootstrap-t p of λ_k = 0 (null in the uncentred form), bootstrap.pDrop = the bootstrap p of its
 * drop test (every stage); at the top: the bootstrap p of J and, with a drop set, of the joint
 * Wald and joint drop tests (the bootstrap's drop set must be the ledger's). The bootstrap verdict uses the
 * bootstrap p for b (needed) and, for λ (priced), the bootstrap p where the bootstrap gives one,
 * else the p of the run's asymptotic basis (robust for first-stage runs, standard otherwise).
 * When the ledger's basis is 'bootstrap', the headline verdict and `verdictBasis` switch to it.
 *
 * Paper: Hall, P. and Horowitz, J. L. (1996), "Bootstrap Critical Values for Tests Based on
 * Generalized-Method-of-Moments Estimators", Econometrica 64(4), 891–916 (recentred moments; the
 * p-values themselves come from bootstrap.ts).
 *
 * @example
 * const merged = withBootstrap(ledger, bootstrapSdfTests(input));
 * // merged.bootstrap.pJ === boot.J.bootstrapP; merged.factors[k].bootstrap.pB === boot.factors[k].wald.bootstrapP
 */
import type { BootstrapResult } from './bootstrap';
import { GmmInputError } from './errors';
import type { LedgerFactor, LedgerResult } from './ledger';
import { factorVerdict } from './verdict';

/**
 * @param ledger the run's ledger (from estimateLedger).
 * @param boot the bootstrap of the same model on the same data (same factors, same order).
 * @returns a new ledger with `bootstrap`, each factor's `bootstrap` and `verdicts.bootstrap` set.
 * @throws GmmInputError when the bootstrap does not belong to the ledger (other factors, T, N or drop set).
 */
export function withBootstrap(ledger: LedgerResult, boot: BootstrapResult): LedgerResult {
  if (boot.T !== ledger.T || boot.N !== ledger.N || boot.K !== ledger.K)
    throw new GmmInputError('length-mismatch', `The bootstrap (T ${boot.T}, N ${boot.N}, K ${boot.K}) is not of this ledger (T ${ledger.T}, N ${ledger.N}, K ${ledger.K}).`);
  const level = ledger.options.level;
  const factors: LedgerFactor[] = ledger.factors.map((f, k) => {
    const bf = boot.factors[k];
    if (!bf || bf.name !== f.name)
      throw new GmmInputError('unknown-factor', `The bootstrap's factor ${k + 1} is '${bf?.name ?? '—'}', the ledger's is '${f.name}'.`, { series: f.name });
    const bootLambda = bf.lambda ? bf.lambda.bootstrapP : null;
    const fallbackLambdaP = f.robust && ledger.stage === 'first' ? f.robust.pLambda : f.pLambda;
    const bootstrap = { pB: bf.wald.bootstrapP, pLambda: bootLambda, pDrop: bf.drop ? bf.drop.bootstrapP : null };
    const bootVerdict = factorVerdict(bootstrap.pB, bootLambda ?? fallbackLambdaP, level);
    const verdicts = { ...f.verdicts, bootstrap: bootVerdict };
    return { ...f, bootstrap, verdicts, verdict: ledger.basis === 'bootstrap' ? bootVerdict : f.verdict };
  });
  const joint = boot.joint;
  if (joint) {
    const ledgerSet = ledger.jointDrop?.factors ?? [];
    if (ledgerSet.length !== joint.factors.length || ledgerSet.some((n, i) => n !== joint.factors[i]))
      throw new GmmInputError(
        'invalid-option',
        `The bootstrap's drop set {${joint.factors.join(', ')}} is not the ledger's {${ledgerSet.join(', ')}}.`,
      );
  }
  return {
    ...ledger,
    factors,
    verdictBasis: ledger.basis === 'bootstrap' ? 'bootstrap' : ledger.verdictBasis,
    bootstrap: {
      draws: boot.draws,
      validDraws: boot.validDraws,
      scheme: boot.scheme,
      blockLength: boot.blockLength,
      seed: boot.seed,
      pJ: boot.J.bootstrapP,
      pJointWald: joint?.wald ? joint.wald.bootstrapP : null,
      pJointDrop: joint?.drop ? joint.drop.bootstrapP : null,
    },
  };
}

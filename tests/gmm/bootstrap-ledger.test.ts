/**
 * withBootstrap (lib/gmm/ledger-bootstrap.ts): the merge copies exactly the bootstrap's numbers into
 * the ledger and switches the headline verdict only when the ledger's basis is 'bootstrap'.
 * Source: identities (the merged numbers are the bootstrap's own; the bootstrap verdict is
 * factorVerdict of the bootstrap p-values at the ledger's level, the rule in methods.md).
 */
import { describe, expect, it } from 'vitest';
import { bootstrapSdfTests } from '../../lib/gmm/bootstrap';
import { withBootstrap } from '../../lib/gmm/ledger-bootstrap';
import { type LedgerOptions } from '../../lib/gmm/ledger';
import { estimateLedger, okOf } from './helpers';
import { factorVerdict } from '../../lib/gmm/verdict';
import { GmmInputError } from '../../lib/gmm/errors';
import { simulateEconomy } from './helpers';

const e = simulateEconomy({ T: 240, N: 8, K: 2, seed: 5 });
const common = { stage: 'second', weighting: 'identity', lags: 1, form: 'centred', factorMeansKnown: false } as const;
const boot = okOf(bootstrapSdfTests({
  returns: e.returns,
  factors: e.factors,
  factorNames: ['A', 'B'],
  options: { ...common, scheme: 'iid', draws: 59, seed: 11, dropSet: ['B'] },
})).bootstrap;

function ledger(extra: Partial<LedgerOptions>) {
  return estimateLedger({
    assetNames: Array.from({ length: 8 }, (_, i) => `P${i}`),
    returns: e.returns,
    factorNames: ['A', 'B'],
    factors: e.factors,
    traded: [true, true],
    options: { ...common, level: 0.05, dropSet: ['B'], ...extra },
  });
}

describe('withBootstrap', () => {
  it('merges exactly the bootstrap numbers (per factor and joint)', () => {
    const l = ledger({ bootstrap: { draws: 59, scheme: 'iid', seed: 11 } });
    const merged = withBootstrap(l, boot);
    expect(merged.bootstrap).toEqual({
      draws: 59,
      validDraws: boot.validDraws,
      scheme: 'iid',
      blockLength: 1,
      seed: 11,
      pJ: boot.J.bootstrapP,
      pJointWald: boot.joint!.wald!.bootstrapP,
      pJointDrop: boot.joint!.drop!.bootstrapP,
    });
    merged.factors.forEach((f, k) => {
      expect(f.bootstrap).toEqual({ pB: boot.factors[k].wald.bootstrapP, pLambda: boot.factors[k].lambda!.bootstrapP, pDrop: boot.factors[k].drop!.bootstrapP });
      expect(f.verdicts.bootstrap).toBe(factorVerdict(boot.factors[k].wald.bootstrapP, boot.factors[k].lambda!.bootstrapP, 0.05));
      // the ledger's own estimates are untouched
      expect(f.b).toBe(l.factors[k].b);
      expect(f.pB).toBe(l.factors[k].pB);
    });
  });

  it("switches the headline verdict and verdictBasis only for basis 'bootstrap'", () => {
    const std = withBootstrap(ledger({ bootstrap: { draws: 59, scheme: 'iid', seed: 11 } }), boot);
    expect(std.verdictBasis).toBe('standard');
    std.factors.forEach((f) => expect(f.verdict).toBe(f.verdicts.standard));
    const bl = ledger({ basis: 'bootstrap', bootstrap: { draws: 59, scheme: 'iid', seed: 11 } });
    expect(bl.verdictBasis).not.toBe('bootstrap'); // pending until merged
    const b = withBootstrap(bl, boot);
    expect(b.verdictBasis).toBe('bootstrap');
    b.factors.forEach((f) => expect(f.verdict).toBe(f.verdicts.bootstrap));
  });

  it('refuses a bootstrap of other data, other factors or another drop set', () => {
    const l = ledger({});
    expect(() => withBootstrap(l, { ...boot, T: 100 })).toThrow(GmmInputError);
    expect(() => withBootstrap(l, { ...boot, factors: [boot.factors[1], boot.factors[0]] })).toThrow(/factor 1 is 'B'/);
    expect(() => withBootstrap(l, { ...boot, joint: { ...boot.joint!, factors: ['A'] } })).toThrow(/drop set \{A\} is not the ledger's \{B\}/);
    const noJoint = withBootstrap(l, { ...boot, joint: null });
    expect(noJoint.bootstrap!.pJointWald).toBeNull();
  });
});

describe('the bootstrap tests the ledger numbers', () => {
  it('first stage: the observed drop statistics are the ledger chi2Drop (same W* = Ŝ⁻¹ at the first-stage b̂), and J, t(b) match', () => {
    for (const weighting of ['identity', 'covariance'] as const) {
      const l = ledger({ stage: 'first', weighting });
      const b = okOf(bootstrapSdfTests({
        returns: e.returns,
        factors: e.factors,
        factorNames: ['A', 'B'],
        options: { ...common, stage: 'first', weighting, scheme: 'iid', draws: 19, seed: 2, dropSet: ['B'] },
      })).bootstrap;
      l.factors.forEach((f, k) => {
        expect(b.factors[k].drop!.stat).toBeCloseTo(f.chi2Drop!.stat, 9);
        expect(b.factors[k].wald.stat).toBeCloseTo(f.tB, 9);
        expect(b.factors[k].lambda!.stat).toBeCloseTo(f.tLambda, 9);
      });
      expect(b.J.stat).toBeCloseTo(l.J.stat, 9);
      expect(b.joint!.drop!.stat).toBeCloseTo(l.jointDrop!.chi2Drop!.stat, 9);
    }
  });
});

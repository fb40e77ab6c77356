/**
 * shared/ledger.ts (zod) accepts estimateLedger's output for every stage/form and rejects NaN.
 */
import { describe, expect, it } from 'vitest';
import { ledgerResultSchema, type LedgerResultParsed } from '../../shared/ledger';
import { type LedgerResult } from '../../lib/gmm/index';
import { estimateLedger, simulateEconomy } from './helpers';

// Compile-time: the library's result type and the schema's inferred type are mutually assignable
// (tsc checks this file).
const toParsed = (r: LedgerResult): LedgerResultParsed => r as LedgerResultParsed;
const toResult = (r: LedgerResultParsed): LedgerResult => r;

describe('ledgerResultSchema', () => {
  const eco = simulateEconomy({ T: 240, N: 5, K: 3, seed: 21 });
  const base = {
    assetNames: eco.returns[0].map((_, i) => `Fund ${i + 1}`),
    returns: eco.returns,
    factorNames: ['MKT', 'CARRY', 'GROWTH'],
    factors: eco.factors,
    traded: [true, true, false],
  };
  for (const stage of ['first', 'second', 'iterated'] as const)
    for (const form of ['centred', 'uncentred'] as const)
      it(`parses the output at stage ${stage}, ${form}`, () => {
        const r = estimateLedger({
          ...base,
          options: { stage, weighting: 'identity', lags: 'auto', form, factorMeansKnown: false, level: 0.05, dropSet: ['MKT', 'CARRY'], fmIntercept: true },
        });
        const parsed = ledgerResultSchema.parse(JSON.parse(JSON.stringify(r)));
        expect(toResult(parsed)).toEqual(r);
        expect(toParsed(r).factors).toHaveLength(3);
      });

  it('rejects a NaN and a missing field', () => {
    const r = estimateLedger({ ...base, options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, level: 0.05 } });
    const bad = structuredClone(r) as unknown as { factors: { b: number }[] };
    bad.factors[0].b = NaN;
    expect(ledgerResultSchema.safeParse(bad).success).toBe(false);
    const { J: _J, ...missing } = r;
    expect(ledgerResultSchema.safeParse(missing).success).toBe(false);
  });

  it('warnings are { code, message }; a ledger stored with plain-text warnings reads them as code note; an unknown code is refused', () => {
    const r = estimateLedger({ ...base, options: { stage: 'second', weighting: 'identity', lags: 2, form: 'centred', factorMeansKnown: false, level: 0.05 } });
    expect(r.warnings.length).toBeGreaterThan(0);
    for (const w of r.warnings) expect(Object.keys(w).sort()).toEqual(['code', 'message']);
    const legacy = { ...structuredClone(r), warnings: ['An old free-text warning.'] };
    expect(ledgerResultSchema.parse(legacy).warnings).toEqual([{ code: 'note', message: 'An old free-text warning.' }]);
    expect(ledgerResultSchema.safeParse({ ...structuredClone(r), warnings: [{ code: 'made-up', message: 'x' }] }).success).toBe(false);
  });
});

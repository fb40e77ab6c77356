/**
 * shared/format.ts's formatP with a level: the printed p never reads as the level or above when
 * the true p is below it (the star beside it says "below"), and never below when it is not.
 * Checks are identities on the printed text (parse it back) over a seeded grid of p-values, plus
 * the examples of the ledger's rule (0.0498 → "0.0498", < 0.001 → "< 0.001").
 */
import { describe, expect, it } from 'vitest';
import { formatP } from '../../shared/format';

/** The number a printed p stands for ("< 0.001" stands for something below 0.001). */
function readBack(s: string): { value: number; below: boolean } {
  if (s.startsWith('< ')) return { value: Number(s.slice(2)), below: true };
  return { value: Number(s), below: false };
}

describe('formatP with a level', () => {
  it('prints the examples of the ledger rule', () => {
    expect(formatP(0.0498, { level: 0.05 })).toBe('0.0498');
    expect(formatP(0.0498)).toBe('0.050'); // without a level: three decimals, as the exports print
    expect(formatP(0.04999, { level: 0.05 })).toBe('0.04999');
    expect(formatP(0.0499999999, { level: 0.05 })).toBe('< 0.050');
    expect(formatP(0.0501, { level: 0.05 })).toBe('0.050'); // not below the level: "0.050" does not claim it is
    expect(formatP(0.0996, { level: 0.1 })).toBe('0.0996');
    expect(formatP(0.0004, { level: 0.05 })).toBe('< 0.001');
    expect(formatP(0.123, { level: 0.05 })).toBe('0.123');
    expect(formatP(null, { level: 0.05 })).toBe('\u2014');
  });

  it('never contradicts the star: printed p < level exactly when p < level (levels 0.01, 0.05, 0.10)', () => {
    let seed = 20261202;
    const rand = () => {
      seed = (seed * 1103515245 + 12345) % 2 ** 31; // linear congruential generator (glibc constants)
      return seed / 2 ** 31;
    };
    for (const level of [0.01, 0.05, 0.1]) {
      const ps = [level, level - 1e-7, level + 1e-7, level - 5e-4, level - 4.9e-4, ...Array.from({ length: 2000 }, () => level * (0.9 + 0.2 * rand()))];
      for (const p of ps) {
        const s = formatP(p, { level });
        const { value, below } = readBack(s);
        const readsBelow = below ? value <= level : value < level;
        expect(readsBelow, `${p} printed as ${s} at level ${level}`).toBe(p < level);
      }
    }
  });
});

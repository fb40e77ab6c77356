/**
 * The JSON codec of values crossing Redis in queue mode (server/jobs/queue-shared.ts): every double
 * comes back as it was, ±Infinity and NaN included (plain JSON would write null), whether or not the
 * text needs the slow path that restores them. Source: identities that must hold (round trips).
 */
import { describe, expect, it } from 'vitest';
import { decode, encode } from '../../server/jobs/queue-shared';

describe('queue codec', () => {
  it('round-trips finite doubles exactly (the plain JSON.parse path)', () => {
    const v = { a: [0.1 + 0.2, 1e-310, -123.456e200, Number.MAX_VALUE, Number.MIN_VALUE], name: 'F1', nested: { x: [[1, 2], [3, 4]] } };
    const text = encode(v);
    expect(text).not.toContain('$num');
    expect(decode(text)).toEqual(v);
  });

  it('round-trips ±Infinity and NaN through their {"$num"} marks', () => {
    const v = { p: [Infinity, -Infinity, NaN, 0.5], stat: NaN, deep: { q: [[-Infinity]] } };
    const text = encode(v);
    expect(text).toContain('"$num"');
    const back = decode<typeof v>(text);
    expect(back).toEqual(v); // toEqual compares with Object.is: NaN equals NaN
    expect(JSON.parse(text)).not.toEqual(v); // without the reviver the marks stay objects
  });

  it('a string that merely contains $num is text, not a mark', () => {
    const v = { factorNames: ['$num', '{"$num":"1"}'], x: [1, Infinity] };
    expect(decode(encode(v))).toEqual(v);
    expect(decode(encode({ factorNames: ['$num'] }))).toEqual({ factorNames: ['$num'] });
  });
});

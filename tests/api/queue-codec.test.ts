/**
 * The JSON codec of values crossing Redis in queue mode (server/jobs/queue-shared.ts): every double
 * comes back as it was, ±Infinity and NaN included (plain JSON would write null), whether or not the
 * text needs the slow path that restores them. Source: identities that must hold (round trips).
 */
import { describe, expect, it } from 'vitest';
import { decode, encode, inputBytes, packInput, unpackInput } from '../../server/jobs/queue-shared';
import { readShared, StoredInputError } from '../../server/jobs/shared-input';

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

/**
 * The stored input (packInput): node:v8's structured-clone bytes, read back by the pool threads.
 * Source: identities that must hold (round trips, Object.is on −0 and NaN); V8's documented header
 * byte 0xFF (the serializer's version tag) against '{' (0x7B) opening a JSON text.
 */
describe('stored input bytes', () => {
  const input = { returns: [[0.01, -0], [NaN, Infinity]], factors: [[-Infinity, 1e-310]], names: ['$num', 'F1'], options: { lags: 'auto', draws: 3 } };

  it('round-trips every double, −0 included (JSON would write 0)', () => {
    const bytes = packInput(input);
    expect(bytes[0]).toBe(0xff);
    const back = unpackInput<typeof input>(bytes);
    expect(back).toEqual(input);
    expect(Object.is(back.returns[0][1], -0)).toBe(true);
    expect(Object.is(decode<typeof input>(encode(input)).returns[0][1], -0)).toBe(false);
  });

  it('reads a JSON input stored by an earlier release as the same value', () => {
    const legacy = Buffer.from(encode({ kind: 'bootstrap', input }), 'utf8');
    expect(legacy[0]).toBe(0x7b);
    const bytes = inputBytes(legacy);
    expect(bytes[0]).toBe(0xff);
    // JSON lost −0 on the way in; everything else is as it was
    expect(unpackInput(bytes)).toEqual({ ...input, returns: [[0.01, 0], [NaN, Infinity]] });
  });

  it('packInput bytes pass through inputBytes untouched (no copy, no decode)', () => {
    const bytes = packInput(input);
    expect(inputBytes(bytes)).toBe(bytes);
  });

  it('bytes of another serialisation version get an error that names the remedy', () => {
    const foreign = Uint8Array.from([0xff, 0x7f, 0x6f, 0x7b, 0x00]);
    expect(() => unpackInput(foreign)).toThrow(/cannot be read by Node\.js v\d+.*same Node\.js major version/);
    expect(() => readShared({ shared: foreign })).toThrow(StoredInputError);
    expect(() => readShared({ shared: foreign })).toThrow(/same Node\.js major version/);
  });
});

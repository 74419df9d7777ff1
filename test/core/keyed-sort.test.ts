/**
 * Sorting index records by key (core/keyed-sort.ts): stable, the same order
 * as a plain comparison sort of the (key, order made) pairs, for keys of one
 * half and of two, and the runs of equal keys found where they begin.
 *
 * @example
 *   npx vitest run test/core/keyed-sort.test.ts
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { HALF_BITS, runStarts, sortRecords } from '../../core/keyed-sort.js';

const half = fc.integer({ min: 0, max: 2 ** HALF_BITS - 1 });
/** Keys drawn from a few values, so equal keys (and a stable order among them) are common. */
const fewKeys = (n: number) => fc.array(fc.constantFrom(0, 1, 4095, 4096, 2 ** 23, 2 ** HALF_BITS - 1), { minLength: n, maxLength: n });

describe('records sorted by key', () => {
  it('keep equal keys in the order they were made, like a stable comparison sort (two halves)', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.oneof(half, fc.constantFrom(0, 7)), fc.oneof(half, fc.constantFrom(0, 7))), { maxLength: 300 }), (pairs) => {
        const sorted = sortRecords({ hi: Uint32Array.from(pairs, (p) => p[0]), lo: Uint32Array.from(pairs, (p) => p[1]), fields: [Uint32Array.from(pairs, (_, i) => i), Uint8Array.from(pairs, (_, i) => i % 256)] });
        const expected = pairs.map((p, i) => ({ p, i })).sort((a, b) => a.p[0] - b.p[0] || a.p[1] - b.p[1] || a.i - b.i);
        expect([...sorted.fields[0]]).toEqual(expected.map((e) => e.i));
        expect([...sorted.fields[1]]).toEqual(expected.map((e) => e.i % 256));
        expect([...sorted.hi]).toEqual(expected.map((e) => e.p[0]));
        expect([...sorted.lo!]).toEqual(expected.map((e) => e.p[1]));
      }),
    );
  });

  it('sort keys of one half, a digit shared by every record skipped without changing the order', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 200 }).chain(fewKeys), (keys) => {
        const sorted = sortRecords({ hi: Uint32Array.from(keys), lo: null, fields: [Uint32Array.from(keys, (_, i) => i)] });
        const expected = keys.map((k, i) => ({ k, i })).sort((a, b) => a.k - b.k || a.i - b.i);
        expect([...sorted.fields[0]]).toEqual(expected.map((e) => e.i));
        expect(sorted.lo).toBeNull();
      }),
    );
  });

  it('find where each distinct key’s run begins', () => {
    const sorted = sortRecords({ hi: Uint32Array.of(5, 1, 5, 1, 9), lo: Uint32Array.of(0, 2, 0, 3, 0), fields: [] });
    expect([...sorted.hi]).toEqual([1, 1, 5, 5, 9]);
    expect([...runStarts(sorted)]).toEqual([0, 1, 2, 4]);
    expect([...runStarts({ hi: new Uint32Array(0), lo: null })]).toEqual([]);
  });
});

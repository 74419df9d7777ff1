/**
 * The vote table (core/votes.ts) against a plain Map of counts: votes up and
 * down in any order, entries leaving at zero, the table growing past its
 * first size. The reference is a Map, so nothing here depends on the table's
 * own hashing.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { VoteTable, mostCounted } from '../../core/votes.js';

type Key = [piece: number, shift: number, dp: number];

/** Every entry of the table with votes, as "piece/shift/dp" → count. */
function contents(t: VoteTable): Map<string, number> {
  const out = new Map<string, number>();
  for (const e of t.top(1 << 20)) out.set(`${t.pieceAt(e)}/${t.shiftAt(e)}/${t.dpAt(e)}`, t.countAt(e));
  return out;
}

describe('vote table', () => {
  it('counts as a Map does, votes taken back leaving no trace', () => {
    const key = fc.tuple(fc.integer({ min: 0, max: 5 }), fc.integer({ min: -40, max: 40 }).map((x) => x * 3840), fc.integer({ min: -255, max: 255 }));
    fc.assert(
      fc.property(fc.array(fc.tuple(key, fc.boolean()), { maxLength: 3000, size: 'max' }), (steps) => {
        // bits 4: room for 8 entries, so the table grows (and shrinks back to live entries) many times.
        const table = new VoteTable(4);
        const ref = new Map<string, number>();
        const cast: Key[] = [];
        for (const [k, back] of steps) {
          if (back && cast.length) {
            // Take back a vote cast earlier, as a streaming window does.
            const [p, s, d] = cast.splice(Math.abs(k[1] / 3840) % cast.length, 1)[0];
            table.add(p, s, d, -1);
            const id = `${p}/${s}/${d}`;
            const n = ref.get(id)! - 1;
            if (n === 0) ref.delete(id);
            else ref.set(id, n);
          } else {
            table.add(k[0], k[1], k[2], 1);
            cast.push(k);
            const id = `${k[0]}/${k[1]}/${k[2]}`;
            ref.set(id, (ref.get(id) ?? 0) + 1);
          }
        }
        expect(contents(table)).toEqual(ref);
      }),
      { numRuns: 200 },
    );
  });

  it('names the most-voted first, and forgets everything on clear', () => {
    const t = new VoteTable();
    t.add(3, -7680, 5, 1);
    t.add(3, -7680, 5, 1);
    t.add(1, 0, 0, 1);
    t.add(2, 3840, -2, 3);
    expect(t.top(2).map((e) => [t.pieceAt(e), t.shiftAt(e), t.dpAt(e), t.countAt(e)])).toEqual([[2, 3840, -2, 3], [3, -7680, 5, 2]]);
    expect(t.top(5, 2)).toHaveLength(2);
    t.add(2, 3840, -2, -3);
    expect(t.top(5).map((e) => t.pieceAt(e))).toEqual([3, 1]);
    t.clear();
    expect(t.top(5)).toEqual([]);
  });

  it('mostCounted keeps ties in entry order', () => {
    expect(mostCounted(Int32Array.of(2, 7, 7, 1), 4, 2)).toEqual([1, 2]);
    expect(mostCounted(Int32Array.of(2, 7, 7, 1), 4, 5, 2)).toEqual([1, 2, 0]);
  });
});

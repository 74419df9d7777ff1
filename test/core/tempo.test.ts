/**
 * Tempo maps (core/tempo.ts): beats ↔ seconds under piecewise-constant
 * tempo, with the SMF 1.0 default of 500,000 µs a quarter note (120 BPM)
 * before any tempo event (check-values.md, "Standard MIDI Files 1.0").
 *
 * @example
 *   npx vitest run test/core/tempo.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DEFAULT_BPM, tempoMap } from '../../core/tempo.js';

describe('tempo map', () => {
  it('with no tempo event, 120 BPM: a beat is half a second', () => {
    expect(DEFAULT_BPM).toBe(120);
    const map = tempoMap([]);
    expect(map.toSeconds(2)).toBe(1);
    expect(map.toBeats(1)).toBe(2);
  });

  it('a tempo change: 8 beats at 120 then 60 BPM → beat 10 is 4 s + 2 s = 6 s', () => {
    const map = tempoMap([{ beat: 0, bpm: 120 }, { beat: 8, bpm: 60 }]);
    expect(map.toSeconds(8)).toBe(4);
    expect(map.toSeconds(10)).toBe(6);
    expect(map.toBeats(6)).toBe(10);
    expect(map.toBeats(3)).toBe(6);
  });

  it('the default tempo holds until the first tempo event, not the first event’s tempo', () => {
    // 4 beats at 120 BPM (2 s), then 90 BPM: beat 7 is 2 s + 3 × 2/3 s = 4 s.
    const map = tempoMap([{ beat: 4, bpm: 90 }]);
    expect(map.toSeconds(2)).toBe(1);
    expect(map.toSeconds(7)).toBeCloseTo(4, 12);
  });

  it('takes the changes in any order and ignores tempos that are not positive and finite', () => {
    const map = tempoMap([{ beat: 8, bpm: 60 }, { beat: 4, bpm: 0 }, { beat: 2, bpm: Number.NaN }, { beat: 0, bpm: 120 }]);
    expect(map.changes).toEqual([{ beat: 0, bpm: 120 }, { beat: 8, bpm: 60 }]);
    expect(map.toSeconds(10)).toBe(6);
  });

  it('seconds → beats → seconds is the identity, and time only moves forward (fast-check)', () => {
    const change = fc.record({ beat: fc.integer({ min: 0, max: 64 }), bpm: fc.integer({ min: 30, max: 300 }) });
    fc.assert(
      fc.property(fc.array(change, { maxLength: 6 }), fc.double({ min: 0, max: 100, noNaN: true }), fc.double({ min: 0, max: 100, noNaN: true }), (changes, b1, b2) => {
        const map = tempoMap(changes);
        expect(map.toBeats(map.toSeconds(b1))).toBeCloseTo(b1, 9);
        return b1 <= b2 ? map.toSeconds(b1) <= map.toSeconds(b2) : map.toSeconds(b1) >= map.toSeconds(b2);
      }),
    );
  });
});

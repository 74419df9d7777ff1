/**
 * Bars and beats (core/bars.ts), worked by hand. Counting bars and beats
 * from 1, and numbering a pickup bar 0, is common practice (no source; see
 * /work/shared/reference/check-values.md, "Musical position"); a bar of n/d
 * lasting n·4/d quarter notes is SMF 1.0's time signature (FF 58: 6/8 = 3
 * quarter notes a bar).
 */
import { describe, expect, it } from 'vitest';
import { barBeat, beatOf, hasPickup, normalMeter, parseSignature } from '../../core/bars.js';

const sig = (beat: number, numerator: number, denominator: number) => ({ beat, numerator, denominator });

describe('bar and beat of a position', () => {
  it('no time signature counts as 4/4 from bar 1, beat 1', () => {
    expect(barBeat([], 0)).toEqual({ bar: 1, beatInBar: 1 });
    expect(barBeat([], 9)).toEqual({ bar: 3, beatInBar: 2 });
    expect(barBeat([], 9.5)).toEqual({ bar: 3, beatInBar: 2.5 });
  });

  it('3/4: three quarter notes a bar', () => {
    expect(barBeat([sig(0, 3, 4)], 3)).toEqual({ bar: 2, beatInBar: 1 });
    expect(barBeat([sig(0, 3, 4)], 8)).toEqual({ bar: 3, beatInBar: 3 });
  });

  it('6/8: two dotted-quarter beats a bar of three quarter notes', () => {
    expect(barBeat([sig(0, 6, 8)], 1.5)).toEqual({ bar: 1, beatInBar: 2 });
    expect(barBeat([sig(0, 6, 8)], 4.5)).toEqual({ bar: 2, beatInBar: 2 });
    expect(barBeat([sig(0, 6, 8)], 33)).toEqual({ bar: 12, beatInBar: 1 });
  });

  it('a 1/4 bar before 4/4 is a pickup: bar 0, and the first full bar is bar 1', () => {
    const m = [sig(0, 1, 4), sig(1, 4, 4)];
    expect(hasPickup(m)).toBe(true);
    expect(barBeat(m, 0)).toEqual({ bar: 0, beatInBar: 1 });
    expect(barBeat(m, 1)).toEqual({ bar: 1, beatInBar: 1 });
    expect(barBeat(m, 6)).toEqual({ bar: 2, beatInBar: 2 });
  });

  it('a 3/4 bar before 4/4 that lasts longer than one bar is no pickup', () => {
    expect(hasPickup([sig(0, 3, 4), sig(6, 4, 4)])).toBe(false);
    expect(barBeat([sig(0, 3, 4), sig(6, 4, 4)], 6)).toEqual({ bar: 3, beatInBar: 1 });
  });

  it('a metre change carries the bar count on: two bars of 4/4, then 3/4', () => {
    const m = [sig(0, 4, 4), sig(8, 3, 4)];
    expect(barBeat(m, 8)).toEqual({ bar: 3, beatInBar: 1 });
    expect(barBeat(m, 13)).toEqual({ bar: 4, beatInBar: 3 });
  });

  it('a position before the start has no bar', () => {
    expect(barBeat([], -2)).toBeNull();
  });

  it('beatOf undoes barBeat', () => {
    const m = [sig(0, 1, 4), sig(1, 6, 8), sig(10, 3, 4)];
    for (const b of [0, 1, 2.5, 4, 9.5, 10, 14]) expect(beatOf(m, barBeat(m, b)!)).toBeCloseTo(b, 9);
  });
});

describe('metre as written', () => {
  it('4/4 fills in before the first signature, and repeats of one signature merge', () => {
    expect(normalMeter([sig(4, 3, 4), sig(7, 3, 4)])).toEqual([sig(0, 4, 4), sig(4, 3, 4)]);
  });

  it('reads "6/8", refuses a lower figure that is not a power of two', () => {
    expect(parseSignature('6/8')).toEqual({ numerator: 6, denominator: 8 });
    expect(parseSignature('3/5')).toBeNull();
    expect(parseSignature('waltz')).toBeNull();
  });
});

import { describe, expect, it } from 'vitest';
import { generator, melodyOf, trainChain, type MelodyEvent } from '../../core/markov.js';
import { seededRandom } from '../../core/stats.js';

const ev = (pitch: number, step = 0.5): MelodyEvent => ({ pitch, duration: step, step });

describe('variable-order Markov generator', () => {
  it('with one tune and a long order, replays that tune from the first context it finds', () => {
    const tune = [60, 62, 64, 65, 67, 69, 71, 72].map((p) => ev(p));
    const gen = generator(trainChain([tune], 8), seededRandom(1));
    // The empty context may start anywhere; once one event is chosen its successors are forced.
    const first = gen.next();
    const start = tune.findIndex((e) => e.pitch === first.pitch);
    const rest = Array.from({ length: tune.length - start - 1 }, () => gen.next().pitch);
    expect(rest).toEqual(tune.slice(start + 1).map((e) => e.pitch));
  });

  it('with order 0 samples from the pooled events only', () => {
    const gen = generator(trainChain([[ev(60), ev(64)], [ev(67)]], 0), seededRandom(9));
    const seen = new Set(Array.from({ length: 200 }, () => gen.next().pitch));
    expect([...seen].sort()).toEqual([60, 64, 67]);
  });

  it('is reproducible for a seed', () => {
    const tunes = [[60, 62, 64, 62, 60, 67].map((p) => ev(p)), [60, 62, 65, 64, 62, 60].map((p) => ev(p))];
    const run = (seed: number) => {
      const g = generator(trainChain(tunes, 2), seededRandom(seed));
      return Array.from({ length: 30 }, () => g.next().pitch);
    };
    expect(run(4)).toEqual(run(4));
    expect(run(4)).not.toEqual(run(5));
  });

  it('rejects an empty training set and a bad order', () => {
    expect(() => trainChain([[]], 2)).toThrow(/at least one tune/);
    expect(() => trainChain([[ev(60)]], -1)).toThrow(/maxOrder/);
  });

  it('takes the top voice of chords and measures steps between onsets', () => {
    const m = melodyOf([
      { onset: 0, duration: 1, pitch: 48 },
      { onset: 0, duration: 1, pitch: 72 },
      { onset: 1, duration: 0.5, pitch: 74 },
      { onset: 2.5, duration: 0.5, pitch: 76 },
    ]);
    expect(m).toEqual([
      { pitch: 72, duration: 1, step: 1 },
      { pitch: 74, duration: 0.5, step: 1.5 },
      { pitch: 76, duration: 0.5, step: 0.5 },
    ]);
  });
});

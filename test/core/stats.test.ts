/**
 * Statistics for reports (core/stats.ts): the seeded generator, sampling,
 * percentiles and the bootstrap interval.
 *
 * @example
 *   npx vitest run test/core/stats.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { bootstrapMeanCi, mean, percentile, sampleIndices, seededRandom } from '../../core/stats.js';

const draw = (seed: number, n: number): number[] => {
  const rand = seededRandom(seed);
  return Array.from({ length: n }, rand);
};

describe('seeded randomness', () => {
  it('the same seed gives the same sequence, another seed another, all in [0, 1)', () => {
    expect(draw(7, 100)).toEqual(draw(7, 100));
    expect(draw(7, 100)).not.toEqual(draw(8, 100));
    expect(draw(7, 1000).every((x) => x >= 0 && x < 1)).toBe(true);
  });

  it('is roughly uniform: a mean of 10,000 draws within 0.02 of 1/2', () => {
    expect(Math.abs(mean(draw(3, 10_000)) - 0.5)).toBeLessThan(0.02);
  });

  it('sampleIndices: k distinct indices of 0…n−1 in ascending order, reproducible, all of them when k ≥ n', () => {
    const s = sampleIndices(50, 10, seededRandom(1));
    expect(s).toHaveLength(10);
    expect(new Set(s).size).toBe(10);
    expect([...s].sort((a, b) => a - b)).toEqual(s);
    expect(s.every((i) => Number.isInteger(i) && i >= 0 && i < 50)).toBe(true);
    expect(sampleIndices(50, 10, seededRandom(1))).toEqual(s);
    expect(sampleIndices(50, 10, seededRandom(2))).not.toEqual(s);
    expect(sampleIndices(4, 9, seededRandom(1))).toEqual([0, 1, 2, 3]);
  });
});

describe('percentiles', () => {
  // Linear interpolation between closest ranks: Hyndman & Fan (1996), "Sample quantiles in statistical
  // packages", definition 7 — the default of R's quantile() and NumPy's percentile().
  it('match definition 7 on worked values', () => {
    const xs = [1, 2, 3, 4];
    expect(percentile(xs, 0)).toBe(1);
    expect(percentile(xs, 50)).toBe(2.5);
    expect(percentile(xs, 90)).toBeCloseTo(3.7, 12);
    expect(percentile(xs, 100)).toBe(4);
    expect(percentile([0, 10, 20, 30, 40, 50, 60, 70, 80, 90, 100], 95)).toBeCloseTo(95, 12);
    expect(percentile([5], 99)).toBe(5);
  });

  it('an empty list has no percentile (NaN), and the mean of nothing is NaN', () => {
    expect(percentile([], 50)).toBeNaN();
    expect(mean([])).toBeNaN();
  });

  it('lie between the smallest and largest value and never fall as q rises (fast-check)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1 }), fc.double({ min: 0, max: 100, noNaN: true }), fc.double({ min: 0, max: 100, noNaN: true }), (raw, q1, q2) => {
        const xs = [...raw].sort((a, b) => a - b);
        const [lo, hi] = [Math.min(q1, q2), Math.max(q1, q2)];
        return percentile(xs, lo) <= percentile(xs, hi) + 1e-12 && percentile(xs, lo) >= xs[0] && percentile(xs, hi) <= xs[xs.length - 1];
      }),
    );
  });
});

describe('bootstrap interval of the pooled mean', () => {
  const groups = [[0.1, 0.2, 0.3], [0.9], [0.4, 0.5], [0.0, 0.05, 0.1, 0.15], [0.7, 0.8]];
  const pooled = mean(groups.flat());

  it('is reproducible with the same seed and differs with another', () => {
    const a = bootstrapMeanCi(groups, seededRandom(5));
    expect(bootstrapMeanCi(groups, seededRandom(5))).toEqual(a);
    expect(bootstrapMeanCi(groups, seededRandom(6))).not.toEqual(a);
  });

  it('holds the pooled mean and lies within the range of the group means', () => {
    const [lo, hi] = bootstrapMeanCi(groups, seededRandom(5))!;
    const means = groups.map(mean);
    expect(lo).toBeLessThan(pooled);
    expect(hi).toBeGreaterThan(pooled);
    expect(lo).toBeGreaterThanOrEqual(Math.min(...means));
    expect(hi).toBeLessThanOrEqual(Math.max(...means));
  });

  it('resamples whole groups: equal groups give a zero-width interval at their mean', () => {
    expect(bootstrapMeanCi([[0.25, 0.75], [0.5], [0.5, 0.5]], seededRandom(1))).toEqual([0.5, 0.5]);
  });

  it('is null with fewer than two groups holding values', () => {
    expect(bootstrapMeanCi([[0.3, 0.4]], seededRandom(1))).toBeNull();
    expect(bootstrapMeanCi([[0.3], []], seededRandom(1))).toBeNull();
    expect(bootstrapMeanCi([], seededRandom(1))).toBeNull();
  });

  it('narrows as groups are added: 40 groups give a tighter interval than 4 of the same spread', () => {
    const spread = [[0.1], [0.3], [0.5], [0.7]];
    const width = (g: number[][]): number => {
      const [lo, hi] = bootstrapMeanCi(g, seededRandom(2))!;
      return hi - lo;
    };
    expect(width(Array.from({ length: 10 }, () => spread).flat())).toBeLessThan(width(spread) / 2);
  });
});

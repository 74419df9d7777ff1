/**
 * Seeded randomness and the statistics reports need: a reproducible
 * generator, sampling, bootstrap intervals and percentiles.
 *
 * @example
 *   const rand = seededRandom(7);
 *   bootstrapMeanCi([[0.2, 0.4], [0.9]], rand)   // → [lo, hi]
 */

/** mulberry32: a small, fast generator whose sequence depends only on the seed. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A seeded sample of k distinct indices from 0…n−1, in ascending order. */
export function sampleIndices(n: number, k: number, rand: () => number): number[] {
  const idx = Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) {
    const j = Math.floor(rand() * (i + 1));
    [idx[i], idx[j]] = [idx[j], idx[i]];
  }
  return idx.slice(0, Math.min(k, n)).sort((a, b) => a - b);
}

export const mean = (xs: readonly number[]): number => (xs.length ? xs.reduce((s, x) => s + x, 0) / xs.length : NaN);

/** Percentile by linear interpolation between closest ranks (q in [0, 100]). */
export function percentile(sorted: readonly number[], q: number): number {
  if (sorted.length === 0) return NaN;
  const rank = (q / 100) * (sorted.length - 1);
  const lo = Math.floor(rank);
  const hi = Math.ceil(rank);
  return sorted[lo] + (sorted[hi] - sorted[lo]) * (rank - lo);
}

export const BOOTSTRAP_RESAMPLES = 2000;

/**
 * 95% percentile-bootstrap interval of the pooled mean, resampling whole
 * groups (one group = the window scores of one query or piece) so windows of
 * the same piece are not treated as independent. Null with fewer than two
 * groups holding values.
 */
export function bootstrapMeanCi(groups: readonly (readonly number[])[], rand: () => number, resamples = BOOTSTRAP_RESAMPLES): [number, number] | null {
  const full = groups.filter((g) => g.length > 0);
  if (full.length < 2) return null;
  const sums = full.map((g) => g.reduce((s, x) => s + x, 0));
  const means: number[] = [];
  for (let r = 0; r < resamples; r++) {
    let sum = 0;
    let count = 0;
    for (let i = 0; i < full.length; i++) {
      const j = Math.floor(rand() * full.length);
      sum += sums[j];
      count += full[j].length;
    }
    means.push(sum / count);
  }
  means.sort((a, b) => a - b);
  return [percentile(means, 2.5), percentile(means, 97.5)];
}

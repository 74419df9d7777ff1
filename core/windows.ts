/**
 * Cutting a point set into windows of W beats with hop H. Windows start at
 * 0, H, 2H, … up to the last ontime; only windows holding notes are kept.
 *
 * @example
 *   windows(points, 16, 8)
 *   // → [{ start: 0, end: 16, points: [...] }, { start: 8, end: 24, points: [...] }, ...]
 */
import { type Point, lowerBound, toGrains, GRAINS_PER_BEAT } from './note.js';

export interface Window {
  /** Start beat. */
  start: number;
  /** End beat (exclusive). */
  end: number;
  points: Point[];
}

export interface WindowShape {
  window: number;
  hop: number;
}

export const DEFAULT_WINDOW: WindowShape = { window: 16, hop: 8 };

/** Throws with a clear message unless the window and hop are positive and finite. */
export function checkShape({ window, hop }: WindowShape): void {
  if (!(Number.isFinite(window) && window > 0)) throw new RangeError(`window must be a positive number of beats, got ${window}`);
  if (!(Number.isFinite(hop) && hop > 0)) throw new RangeError(`hop must be a positive number of beats, got ${hop}`);
  // Windows step on the grain grid: a hop that rounds to 0 grains would never advance.
  for (const [name, beats] of [['window', window], ['hop', hop]] as const) {
    if (toGrains(beats) < 1) throw new RangeError(`${name} must be at least 1/${GRAINS_PER_BEAT} beat, got ${beats}`);
  }
}

export function windows(points: readonly Point[], shape: WindowShape = DEFAULT_WINDOW): Window[] {
  checkShape(shape);
  const out: Window[] = [];
  if (points.length === 0) return out;
  const last = points[points.length - 1].at;
  const hopGrains = toGrains(shape.hop);
  const widthGrains = toGrains(shape.window);
  for (let from = 0; from <= last; from += hopGrains) {
    const lo = lowerBound(points, from);
    const hi = lowerBound(points, from + widthGrains);
    if (hi > lo) out.push({ start: from / GRAINS_PER_BEAT, end: (from + widthGrains) / GRAINS_PER_BEAT, points: points.slice(lo, hi) });
  }
  return out;
}

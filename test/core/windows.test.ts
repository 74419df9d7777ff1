/**
 * Windows (core/windows.ts): W beats long, starting at 0, H, 2H, …; only
 * windows holding notes are kept (issue 2, "Core").
 *
 * @example
 *   npx vitest run test/core/windows.test.ts
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { toGrains } from '../../core/note.js';
import { DEFAULT_WINDOW, checkShape, windows } from '../../core/windows.js';
import { pointSet, pts } from '../helpers/points.js';

const starts = (w: { start: number }[]): number[] => w.map((x) => x.start);

describe('windows', () => {
  it('the defaults are 16 beats with hop 8', () => {
    expect(DEFAULT_WINDOW).toEqual({ window: 16, hop: 8 });
  });

  it('start at 0, H, 2H, … and hold the points with ontime in [start, start + W)', () => {
    // Notes at beats 0, 7.5, 8, 15.75, 16, 23 → windows [0,16) [8,24) [16,32).
    const points = pts([0, 60], [7.5, 62], [8, 64], [15.75, 65], [16, 67], [23, 69]);
    const ws = windows(points, { window: 16, hop: 8 });
    expect(ws.map((w) => [w.start, w.end, w.points.length])).toEqual([[0, 16, 4], [8, 24, 4], [16, 32, 2]]);
    expect(ws[1].points).toEqual(pts([8, 64], [15.75, 65], [16, 67], [23, 69]));
  });

  it('start at 0 even when the first note comes later, and stop at the last ontime', () => {
    expect(starts(windows(pts([3, 60], [20, 62]), { window: 16, hop: 8 }))).toEqual([0, 8, 16]);
  });

  it('leave out windows without notes', () => {
    // Notes in beats 0–4 and 40–44: [8,24) [16,32) [24,40) are empty.
    const points = pts([0, 60], [4, 62], [40, 64], [44, 65]);
    expect(starts(windows(points, { window: 16, hop: 8 }))).toEqual([0, 32, 40]);
  });

  it('a hop longer than the window skips material between windows, as asked', () => {
    expect(windows(pts([0, 60], [5, 62], [10, 64]), { window: 4, hop: 10 }).map((w) => w.points.length)).toEqual([1, 1]);
  });

  it('no points, no windows', () => {
    expect(windows([], DEFAULT_WINDOW)).toEqual([]);
  });

  it('every point is in exactly the windows whose span covers it (fast-check)', () => {
    fc.assert(
      fc.property(pointSet({ beats: 64 }), fc.constantFrom(2, 4, 8, 16), fc.constantFrom(1, 2, 4, 8), (points, window, hop) => {
        const ws = windows(points, { window, hop });
        for (const p of points) {
          const covering = ws.filter((w) => w.points.includes(p)).map((w) => w.start);
          const expected: number[] = [];
          for (let k = 0; k * hop * toGrains(1) <= p.at; k++) if (p.at < toGrains(k * hop + window)) expected.push(k * hop);
          expect(covering).toEqual(expected);
        }
        return ws.every((w) => w.points.length > 0 && w.end - w.start === window && w.start % hop === 0);
      }),
    );
  });

  it.each([
    [{ window: 0, hop: 8 }, /window must be a positive number of beats, got 0/],
    [{ window: -16, hop: 8 }, /window must be a positive number of beats, got -16/],
    [{ window: 16, hop: Number.NaN }, /hop must be a positive number of beats, got NaN/],
    [{ window: Infinity, hop: 8 }, /window must be a positive number of beats, got Infinity/],
    // Below one grain the hop would round to 0 and the windows never advance.
    [{ window: 16, hop: 1e-5 }, /hop must be at least 1\/3840 beat, got 0.00001/],
    [{ window: 1e-4, hop: 8 }, /window must be at least 1\/3840 beat, got 0.0001/],
  ])('rejects %o with a message naming the field', (shape, message) => {
    expect(() => checkShape(shape)).toThrow(RangeError);
    expect(() => windows(pts([0, 60]), shape)).toThrow(message);
  });
});

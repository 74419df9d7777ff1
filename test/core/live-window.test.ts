import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { LiveWindow } from '../../core/live-window.js';
import { toGrains } from '../../core/note.js';

const onsets = (w: LiveWindow) => w.notes.map((n) => n.onset);

describe('the rolling window', () => {
  it('holds the notes of the last W beats before the newest, (newest − W, newest]', () => {
    const w = new LiveWindow({ beats: 4, maxNotes: 100 });
    for (const onset of [0, 1, 2, 3, 4]) w.add({ onset, pitch: 60 });
    expect(onsets(w)).toEqual([1, 2, 3, 4]); // 0 is exactly W behind 4: out
    expect(w.startGrains).toBe(toGrains(1));
  });

  it('puts a slightly late note in its place', () => {
    const w = new LiveWindow({ beats: 8, maxNotes: 100 });
    for (const onset of [1, 3, 2, 2.5]) w.add({ onset, pitch: 60 });
    expect(onsets(w)).toEqual([1, 2, 2.5, 3]);
    expect(w.restarts).toBe(0);
  });

  it('starts over when a note lands a window or more behind the newest (the clock went back)', () => {
    const w = new LiveWindow({ beats: 8, maxNotes: 100 });
    for (const onset of [100, 101, 102]) w.add({ onset, pitch: 60 });
    w.add({ onset: 0, pitch: 62 });
    expect(onsets(w)).toEqual([0]);
    expect(w.restarts).toBe(1);
  });

  it('lets the oldest go early when full, and counts them', () => {
    const w = new LiveWindow({ beats: 16, maxNotes: 3 });
    for (const onset of [0, 0.25, 0.5, 0.75, 1]) w.add({ onset, pitch: 60 });
    expect(onsets(w)).toEqual([0.5, 0.75, 1]);
    expect(w.dropped).toBe(2);
  });

  it('always spans less than W beats, in onset order (any arrival order)', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 400 }), { minLength: 1, maxLength: 60 }), fc.integer({ min: 1, max: 32 }), (quarters, beats) => {
        const w = new LiveWindow({ beats, maxNotes: 1000 });
        for (const q of quarters) w.add({ onset: q / 4, pitch: 60 });
        const o = onsets(w);
        expect(o).toEqual([...o].sort((a, b) => a - b));
        expect(o[o.length - 1] - o[0]).toBeLessThan(beats);
        expect(o).toContain(quarters[quarters.length - 1] / 4); // the note just added is always in
      }),
    );
  });

  it('refuses a window that is not a positive number of beats', () => {
    expect(() => new LiveWindow({ beats: 0, maxNotes: 1 })).toThrow(/window must be a positive number of beats, got 0/);
  });
});

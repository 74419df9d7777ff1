/**
 * Tempo maps: beats ↔ seconds under piecewise-constant tempo.
 *
 * @example
 *   const map = tempoMap([{ beat: 0, bpm: 120 }, { beat: 8, bpm: 60 }]);
 *   map.toSeconds(10)   // → 6   (8 beats at 120 = 4 s, 2 beats at 60 = 2 s)
 *   map.toBeats(6)      // → 10
 */
export interface TempoChange {
  beat: number;
  bpm: number;
}

export interface TempoMap {
  changes: TempoChange[];
  toSeconds(beat: number): number;
  toBeats(seconds: number): number;
}

/** The SMF default when a file has no tempo event: 500,000 µs per quarter note. */
export const DEFAULT_BPM = 120;

export function tempoMap(changes: readonly TempoChange[]): TempoMap {
  const sorted = [...changes].filter((c) => c.bpm > 0 && Number.isFinite(c.bpm)).sort((a, b) => a.beat - b.beat);
  // SMF 1.0: until the first Set Tempo event the tempo is the default, not the first event's.
  if (sorted.length === 0 || sorted[0].beat > 0) sorted.unshift({ beat: 0, bpm: DEFAULT_BPM });
  const starts: number[] = [0];
  for (let i = 1; i < sorted.length; i++) starts.push(starts[i - 1] + ((sorted[i].beat - sorted[i - 1].beat) * 60) / sorted[i - 1].bpm);
  const segmentByBeat = (beat: number): number => {
    let i = sorted.length - 1;
    while (i > 0 && sorted[i].beat > beat) i--;
    return i;
  };
  const segmentBySecond = (s: number): number => {
    let i = starts.length - 1;
    while (i > 0 && starts[i] > s) i--;
    return i;
  };
  return {
    changes: sorted,
    toSeconds: (beat) => {
      const i = segmentByBeat(beat);
      return starts[i] + ((beat - sorted[i].beat) * 60) / sorted[i].bpm;
    },
    toBeats: (seconds) => {
      const i = segmentBySecond(seconds);
      return sorted[i].beat + ((seconds - starts[i]) * sorted[i].bpm) / 60;
    },
  };
}

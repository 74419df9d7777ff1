/**
 * The chorale fixtures (test/fixtures/jsb, copied from the open JSB chorales
 * dataset; source note in its README) as notes and corpus pieces.
 *
 * Decoding, per the dataset's README: a chorale is a list of time steps of
 * one sixteenth (0.25 beat); each step holds soprano, alto, tenor and bass as
 * MIDI note numbers, −1 for silence; within a voice, consecutive equal
 * pitches form one note, and a change of pitch or a −1 ends it.
 *
 * @example
 *   const { train, test } = loadChorales();
 *   const corpus = corpusOf(train.map((c) => pieceOf(c.path, c.notes)));
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Note } from '../../core/note.js';

export const STEP_BEATS = 0.25;
const VOICES = 4;

export type Grid = number[][];

/** One chorale's grid → notes, one channel a voice (1 soprano … 4 bass), sorted by onset then pitch. */
export function decodeChorale(steps: Grid): Note[] {
  const notes: Note[] = [];
  for (let voice = 0; voice < VOICES; voice++) {
    let start = 0;
    for (let i = 1; i <= steps.length; i++) {
      const pitch = steps[start][voice];
      if (i < steps.length && steps[i][voice] === pitch) continue;
      if (pitch !== -1) notes.push({ onset: start * STEP_BEATS, duration: (i - start) * STEP_BEATS, pitch, morph: pitch, velocity: 80, channel: voice + 1 });
      start = i;
    }
  }
  return notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
}

export interface Chorale {
  /** `train-0`, `test-2`: split and index in the dataset. */
  path: string;
  notes: Note[];
}

export function loadChorales(): { train: Chorale[]; test: Chorale[] } {
  const file = join(import.meta.dirname, '../fixtures/jsb/chorales.json');
  const data = JSON.parse(readFileSync(file, 'utf8')) as { train: Grid[]; test: Grid[] };
  const decode = (split: 'train' | 'test'): Chorale[] => data[split].map((steps, i) => ({ path: `${split}-${i}`, notes: decodeChorale(steps) }));
  return { train: decode('train'), test: decode('test') };
}

/**
 * The demo generator's training set: the melody (channel 1) of every tune in
 * a corpus folder, read from the same MIDI files the daemon scores against,
 * so what the chain copies is exactly what the corpus holds.
 *
 * The demo corpus keeps each tune's melody on channel 1 and its
 * accompaniment on channel 2 (presets/demo/README.md); the melody is taken
 * from channel 1 rather than as the top voice of everything, because where
 * the tune holds a long note the top voice would be an accompaniment note.
 *
 * @example
 *   const tunes = demoTunes('presets/demo/corpus');
 *   tunes[0]   // → { piece: 'gannets-over-skerrow.mid', title: 'Gannets over Skerrow', melody: [{ pitch: 76, duration: 0.5, step: 0.5 }, …] }
 */
import { type MelodyEvent, melodyOf } from '../../core/markov.js';
import { pieceName } from '../../core/corpus.js';
import { loadCorpusFolder } from '../corpus/corpus-files.js';
import { UsageError } from '../formats/user-error.js';

/** The channel the demo tunes keep their melody on. */
export const MELODY_CHANNEL = 1;

export interface DemoTune {
  piece: string;
  title: string;
  melody: MelodyEvent[];
}

export function demoTunes(corpusDir: string): DemoTune[] {
  const { corpus } = loadCorpusFolder(corpusDir);
  const tunes = corpus.pieces
    .map((p) => ({ piece: p.path, title: pieceName(p), melody: melodyOf(p.notes.filter((n) => n.channel === MELODY_CHANNEL)) }))
    .filter((t) => t.melody.length > 0);
  if (tunes.length === 0) throw new UsageError(`${corpusDir}: no tune with notes on MIDI channel ${MELODY_CHANNEL} to train the demo generator on`);
  return tunes;
}

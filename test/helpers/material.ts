/**
 * Test material for matching beyond the exact path: the JSB chorale
 * fixtures (test/fixtures/jsb, with their source note) as a 40-chorale corpus
 * and 20 held-out chorales, seeded ways of "playing" a passage — human
 * timing, dropped notes, another tempo — and unrelated random walks.
 *
 * @example
 *   const { corpus, heldOut } = chorales();
 *   const take = played(passage(corpus.pieces[3].notes, 8, 24), { jitter: 0.06, drop: 0.1, seed: 7 });
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { Note } from '../../core/note.js';
import type { Corpus, Piece } from '../../core/corpus.js';
import { seededRandom } from '../../core/stats.js';
import { type Grid, decodeChorale } from './jsb.js';
import { pieceOf } from './corpus.js';

/** The fixture, whether this module runs from test/ (vitest) or from dist/test/ (the benchmark). */
function fixture(): string {
  const tried = ['../fixtures/jsb/chorales.json', '../../../test/fixtures/jsb/chorales.json'].map((rel) => fileURLToPath(new URL(rel, import.meta.url)));
  const found = tried.find((p) => existsSync(p));
  if (!found) throw new Error(`the JSB chorale fixture is missing: looked for ${tried.join(' and ')}`);
  return found;
}

/** Chorales 0–39 of the fixture's train split as the corpus; 40–59, unrelated to them, held out. */
export function chorales(): { corpus: Corpus; heldOut: Piece[] } {
  const { train } = JSON.parse(readFileSync(fixture(), 'utf8')) as { train: Grid[] };
  const pieces = train.map((steps, i) => pieceOf(`train-${i}.mid`, decodeChorale(steps)));
  return { corpus: { pieces: pieces.slice(0, 40) }, heldOut: pieces.slice(40, 60) };
}

/** Notes with onset in [from, to) beats, moved to start at `at`. */
export function passage(notes: readonly Note[], from: number, to: number, at = 0): Note[] {
  return notes.filter((n) => n.onset >= from && n.onset < to).map((n) => ({ ...n, onset: n.onset - from + at }));
}

export interface Playing {
  /** Largest ontime deviation, beats (uniform in ±jitter). */
  jitter?: number;
  /** Share of notes left out. */
  drop?: number;
  /** Played duration / written duration. */
  scale?: number;
  /** Semitones added to every MIDI pitch (morphetic pitch is left as written: these tests match chromatically). */
  transpose?: number;
  seed: number;
}

/** A passage as someone might play it: stretched in time, jittered, with notes dropped, seeded. */
export function played(notes: readonly Note[], p: Playing): Note[] {
  const rand = seededRandom(p.seed);
  const scale = p.scale ?? 1;
  const out: Note[] = [];
  for (const n of notes) {
    const shake = (2 * rand() - 1) * (p.jitter ?? 0);
    if (rand() < (p.drop ?? 0)) continue;
    const t = p.transpose ?? 0;
    out.push({ ...n, onset: Math.max(0, n.onset * scale + shake), duration: n.duration * scale, pitch: n.pitch + t });
  }
  return out.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
}

/** A seeded random walk in four loose voices on an eighth-note grid: unrelated material. */
export function randomWalk(beats: number, seed: number): Note[] {
  const rand = seededRandom(seed);
  const notes: Note[] = [];
  const voices = [72, 65, 58, 48];
  for (let v = 0; v < voices.length; v++) {
    let pitch = voices[v];
    for (let t = 0; t < beats; ) {
      const duration = [0.5, 1, 1, 2][Math.floor(rand() * 4)];
      pitch = Math.max(36, Math.min(84, pitch + Math.floor(rand() * 7) - 3));
      notes.push({ onset: t, duration, pitch, morph: pitch, velocity: 80, channel: v + 1 });
      t += duration;
    }
  }
  return notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
}

/**
 * A small world to review, built in a temp folder: a corpus of three
 * invented pieces written as MIDI by the hand-laid SMF writer of
 * test/helpers/smf.mjs (not by the writer under test), and a session log
 * written with SessionLog, whose first session quotes one piece transposed
 * (logged as an older daemon did, without live scores), whose second keeps
 * every live score and warns about a quote that falls between the review's
 * fixed windows, and whose third (the latest) holds no notes.
 *
 * @example
 *   const w = reviewWorld();
 *   spawnSync('node', ['dist/bridge/cli.js', 'review', '1', '--log', w.log, '--json'])
 */
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { spawnSync } from 'node:child_process';
import type { Note } from '../../core/note.js';
import { seededRandom } from '../../core/stats.js';
import { type LoggedNote, SessionLog } from '../../bridge/formats/session-log.js';
// @ts-expect-error: a plain-JavaScript helper, without type declarations.
import { deltas, endOfTrack, noteEvents, smf, tempo, track, trackName } from './smf.mjs';

export const ROOT = resolve(import.meta.dirname, '../..');
export const CLI = join(ROOT, 'dist/bridge/cli.js');

/** Runs the built command line; the tests that spawn it need `npx tsc -p tsconfig.json` (npm test does it). */
export function cli(args: readonly string[], cwd = ROOT): { code: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { cwd, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** An invented tune: an eighth-note melody (channel 1) over a half-note bass (channel 2). */
function tune(seed: number, beats: number, low: number): Note[] {
  const rand = seededRandom(seed);
  const notes: Note[] = [];
  let pitch = low + 12;
  for (let b = 0; b < beats; b += 0.5) {
    pitch = Math.min(low + 24, Math.max(low + 7, pitch + Math.floor(rand() * 7) - 3));
    notes.push({ onset: b, duration: 0.5, pitch, morph: pitch, velocity: 70 + Math.floor(rand() * 40), channel: 1 });
  }
  for (let b = 0; b < beats; b += 2) {
    const p = low - 12 + [0, 5, 7, 3][(b / 2) % 4];
    notes.push({ onset: b, duration: 2, pitch: p, morph: p, velocity: 64, channel: 2 });
  }
  return notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
}

/** A format 0 file with a title (SMF 1.0 meta FF 03) and a tempo (FF 51), as a corpus piece has. */
const pieceFile = (notes: readonly Note[], title: string): Uint8Array =>
  smf({ format: 0, ppq: 480, tracks: [track([...deltas([[0, trackName(title)], [0, tempo(100)], ...noteEvents(notes, { ppq: 480 })]), [0, endOfTrack()]], { running: true })] });

export const PIECES = [
  { file: 'quillon-ferry.mid', title: 'Quillon Ferry', notes: tune(11, 32, 62) },
  { file: 'marrowfield-slow-air.mid', title: 'Marrowfield Slow Air', notes: tune(23, 32, 57) },
  { file: 'hobnail-tide.mid', title: 'Hobnail Tide', notes: tune(37, 32, 60) },
];

/** Session 1 plays beats 8–24 of this piece, 3 semitones higher, at beats 16–32. */
export const QUOTE = { piece: 1, from: 8, to: 24, at: 16, transposition: 3 };
export const SETTINGS = { window: 16, hop: 8, threshold: 0.5, bpm: 100 };
/** Session 2 plays beats 4–20 of this piece, 2 semitones lower, at beats 12–28: across the fixed windows 8–24 and 16–32, whole in neither. */
export const BETWEEN = { piece: 0, from: 4, to: 20, at: 12, transposition: -2 };
export const STARTED = new Date('2025-06-01T18:00:00.000Z');

export interface ReviewWorld {
  dir: string;
  corpus: string;
  log: string;
  /** What session 1 logged. */
  notes: LoggedNote[];
  /** The ids of the session with notes and of the empty one. */
  played: number;
  empty: number;
  /** Session 2, with live scores: its id, its notes, and how many scoring passes it logged. */
  heard: number;
  heardNotes: LoggedNote[];
  passes: number;
}

/** Free playing that will not line up with the corpus: random pitches on a triplet grid. */
function noodle(seed: number, from: number, to: number): Omit<Note, 'morph'>[] {
  const rand = seededRandom(seed);
  const out: Omit<Note, 'morph'>[] = [];
  for (let b = from; b < to - 1e-9; b += 1 / 3) out.push({ onset: Math.round(b * 3) / 3, duration: 1 / 3, pitch: 40 + Math.floor(rand() * 50), velocity: 60, channel: 1 });
  return out;
}

/**
 * Session 2 as the daemon logs it now: a scoring pass after every note
 * (the window the last 16 beats up to it), scoring high while the window
 * holds the quote, and one warning raised once the whole quote is in.
 */
function heardSession(db: SessionLog, corpus: string): { heard: number; heardNotes: LoggedNote[]; passes: number } {
  const q = PIECES[BETWEEN.piece];
  const quoted = q.notes
    .filter((n) => n.onset >= BETWEEN.from && n.onset < BETWEEN.to)
    .map((n) => ({ ...n, onset: n.onset - BETWEEN.from + BETWEEN.at, pitch: n.pitch + BETWEEN.transposition }));
  const played = [...noodle(7, 0, 12), ...quoted, ...noodle(8, 28, 40)].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const beatMs = 60_000 / SETTINGS.bpm;
  const start = STARTED.getTime() + 7_200_000;
  const notes: LoggedNote[] = played.map((n, i) => ({ ...n, morph: n.pitch, seq: i + 1, receivedAt: start + n.onset * beatMs }));
  const id = db.startSession({ corpus, preset: 'harbour', settings: { ...SETTINGS, liveScores: true } }, new Date(start));
  for (const n of notes) db.addNote(id, n);
  for (const n of notes) {
    const windowStart = Math.max(0, n.onset - SETTINGS.window);
    const inQuote = n.onset >= BETWEEN.at && n.onset < BETWEEN.at + 16;
    const score = inQuote ? Math.min(1, (n.onset - BETWEEN.at + 1) / 16) : 0.1;
    db.addScore(id, {
      seq: n.seq, time: n.receivedAt, score, windowStart, windowNotes: notes.filter((m) => m.onset >= windowStart && m.onset <= n.onset).length,
      piece: inQuote ? q.file : null, transposition: inQuote ? BETWEEN.transposition : null, pieceStart: inQuote ? BETWEEN.from - (BETWEEN.at - windowStart) : null, matched: inQuote ? 8 : 0,
    });
  }
  const last = notes.filter((n) => n.onset < BETWEEN.at + 16).pop()!;
  const w = db.addWarning(id, { seq: last.seq, raisedAt: last.receivedAt, piece: q.file, title: q.title, score: 0.97, transposition: BETWEEN.transposition, pieceStart: BETWEEN.from, startBeat: BETWEEN.at });
  db.clearWarning(w, last.receivedAt + 5_000);
  db.endSession(id, new Date(start + 40 * beatMs));
  return { heard: id, heardNotes: notes, passes: notes.length };
}

export function reviewWorld(): ReviewWorld {
  const dir = mkdtempSync(join(tmpdir(), 'ew-review-'));
  const corpus = join(dir, 'corpus');
  mkdirSync(corpus);
  for (const p of PIECES) writeFileSync(join(corpus, p.file), pieceFile(p.notes, p.title));

  const q = PIECES[QUOTE.piece];
  const quoted = q.notes
    .filter((n) => n.onset >= QUOTE.from && n.onset < QUOTE.to)
    .map((n) => ({ ...n, onset: n.onset - QUOTE.from + QUOTE.at, pitch: n.pitch + QUOTE.transposition }));
  const played = [...noodle(5, 0, 16), ...quoted, ...noodle(6, 32, 48)].sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  const beatMs = 60_000 / SETTINGS.bpm;
  const notes: LoggedNote[] = played.map((n, i) => ({ ...n, morph: n.pitch, seq: i + 1, receivedAt: STARTED.getTime() + n.onset * beatMs }));

  const log = join(dir, 'sessions.db');
  const db = SessionLog.open(log);
  const id = db.startSession({ corpus, preset: 'harbour', settings: SETTINGS }, STARTED);
  for (const n of notes) db.addNote(id, n);
  const warned = notes.find((n) => n.onset >= QUOTE.at + 8)!;
  const w = db.addWarning(id, { seq: warned.seq, raisedAt: warned.receivedAt, piece: q.file, title: q.title, score: 0.94, transposition: QUOTE.transposition, pieceStart: QUOTE.from, startBeat: QUOTE.at });
  db.clearWarning(w, warned.receivedAt + 9_000);
  db.endSession(id, new Date(STARTED.getTime() + 48 * beatMs));
  const heard = heardSession(db, corpus);
  const empty = db.startSession({ corpus, preset: 'harbour', settings: SETTINGS }, new Date(STARTED.getTime() + 9_000_000));
  db.endSession(empty, new Date(STARTED.getTime() + 9_060_000));
  db.close();
  return { dir, corpus, log, notes, played: id, empty, ...heard };
}

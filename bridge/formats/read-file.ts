/**
 * The score files earwitness reads, told apart by extension, and one entry
 * point that reads any of them: Standard MIDI Files (.mid, .midi), MusicXML
 * (.musicxml, .xml, compressed .mxl) and ABC tune books (.abc). A MusicXML
 * file is read as compressed when its bytes are a zip archive, whatever its
 * extension says.
 *
 * MIDI files come back with no time signatures (the MIDI reader does not
 * keep them yet).
 *
 * @example
 *   formatOf('tunes/book.abc')                     // → 'abc'
 *   readScoreFile('tunes/book.abc').pieces.length  // → 12, one per tune
 *   readOnePiece('tunes/book.abc#3').title         // → the title of tune X:3
 */
import { statSync } from 'node:fs';
import { MAX_MIDI_BYTES, MidiFileError, type MidiPiece, readMidi } from './midi-file.js';
import { parseAbc } from './abc.js';
import { mxlScore } from './mxl.js';
import { parseMusicXml } from './musicxml.js';
import { type ScoreFile, type ScorePiece, type ScoreReadOptions, ScoreFileError, pieceId, readWithin } from './score-piece.js';

export type ScoreFormat = 'midi' | 'musicxml' | 'abc';
export const SCORE_FORMATS: readonly ScoreFormat[] = ['midi', 'musicxml', 'abc'];
/** How a person names each format. */
export const FORMAT_NAMES: Record<ScoreFormat, string> = { midi: 'MIDI', musicxml: 'MusicXML', abc: 'ABC' };

/** The format a file name says, or null for a file earwitness does not read. */
export function formatOf(path: string): ScoreFormat | null {
  if (/\.midi?$/i.test(path)) return 'midi';
  if (/\.(musicxml|xml|mxl)$/i.test(path)) return 'musicxml';
  if (/\.abc$/i.test(path)) return 'abc';
  return null;
}

/** What went wrong reading a file, without the file name (the caller shows it). */
export const unreadableReason = (e: unknown): string => (e instanceof MidiFileError || e instanceof ScoreFileError ? e.reason : (e as Error).message);

/** A zip archive's first four bytes (PKWARE APPNOTE 4.3.7, local file header). */
const isZip = (b: Uint8Array): boolean => b[0] === 0x50 && b[1] === 0x4b && b[2] === 0x03 && b[3] === 0x04;

function readBytes(file: string, max: number): Buffer {
  const bytes = readWithin(file, max, (reason) => new ScoreFileError(file, reason));
  if (bytes.length === 0) throw new ScoreFileError(file, 'the file is empty');
  return bytes;
}

/** An SMF as a score file of one piece. */
export const midiScore = (m: MidiPiece): ScoreFile => ({ pieces: [{ id: null, title: m.title, notes: m.notes, key: m.key, beats: m.beats, meters: [...m.meter] }], skipped: [] });

/** Reads a score file of any format. Throws MidiFileError or ScoreFileError naming the file when it cannot be read at all. */
export function readScoreFile(file: string, options: ScoreReadOptions = {}): ScoreFile {
  const format = formatOf(file);
  if (format === 'midi' || format === null) return midiScore(readMidi(file, options));
  const bytes = readBytes(file, options.maxBytes ?? MAX_MIDI_BYTES);
  if (format === 'abc') return parseAbc(new TextDecoder('utf-8').decode(bytes), file, options);
  const xml = isZip(bytes) ? mxlScore(bytes, file).bytes : bytes;
  return { pieces: [parseMusicXml(xml, file, options)], skipped: [] };
}

/**
 * Reads one piece: a file of one piece, or one tune of a tune book named as
 * `book.abc#3` (its X: number). Throws ScoreFileError when the file holds
 * several pieces and none is named, or not the one named.
 */
export function readOnePiece(path: string, options: ScoreReadOptions = {}): ScorePiece {
  const hash = path.lastIndexOf('#');
  const named = hash > 0 && !exists(path) ? { file: path.slice(0, hash), id: path.slice(hash + 1) } : { file: path, id: null };
  const { pieces, skipped } = readScoreFile(named.file, options);
  const ids = [...pieces.map((p) => p.id), ...skipped.map((s) => s.id)];
  const list = `${ids.length} tunes (X: ${ids.join(', ')})`;
  if (named.id !== null) {
    const piece = pieces.find((p) => p.id === named.id);
    if (piece) return piece;
    const bad = skipped.find((s) => s.id === named.id);
    throw new ScoreFileError(pieceId(named.file, named.id), bad ? bad.error : `no such tune: the file holds ${list}`);
  }
  if (pieces.length === 1 && skipped.length === 0) return pieces[0];
  if (pieces.length === 0) throw new ScoreFileError(path, skipped[0]?.error ?? 'holds no piece');
  throw new ScoreFileError(path, `holds ${list}; name one as ${pieceId(path, pieces[0].id)}`);
}

function exists(path: string): boolean {
  try {
    statSync(path);
    return true;
  } catch {
    return false;
  }
}

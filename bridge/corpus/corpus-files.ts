/**
 * Finding score files on disk (MIDI, MusicXML, ABC: bridge/formats) and
 * loading them as corpus pieces or queries. A tune book gives a piece per
 * tune, known as `book.abc#X`. An unreadable file or tune is skipped with
 * its reason, never a crash. Symbolic links to files and folders are
 * followed (a folder of links is a common way to pick a subset of a large
 * collection); a link that leads back into a folder being walked is a loop,
 * reported and not followed.
 *
 * @example
 *   walkCorpus('picks')   // → { files: ['picks/reel.mid', 'picks/book.abc', …], skipped: [{ file: 'loop', error: 'a symbolic link back to …' }] }
 */
import { readdirSync, realpathSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import type { Corpus, Piece } from '../../core/corpus.js';
import type { QueryInput } from '../../core/report.js';
import { MidiFileError, parseMidi } from '../formats/midi-file.js';
import { type ScoreFile, type ScoreReadOptions, pieceId } from '../formats/score-piece.js';
import { formatOf, midiScore, readScoreFile, unreadableReason } from '../formats/read-file.js';


export interface Skipped {
  file: string;
  error: string;
}

/**
 * Every score file (MIDI, MusicXML, ABC) under `dir`, recursively, in a
 * stable order, links followed; a link back into a folder on the way down (a loop), or a link
 * that leads nowhere, is listed in `skipped` with its path relative to `dir`.
 */
export function walkCorpus(dir: string): { files: string[]; skipped: Skipped[] } {
  const files: string[] = [];
  const skipped: Skipped[] = [];
  const walk = (d: string, above: readonly string[]): void => {
    for (const entry of readdirSync(d, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0))) {
      const p = join(d, entry.name);
      if (!entry.isSymbolicLink()) {
        if (entry.isDirectory()) walk(p, [...above, realpathSync(p)]);
        else if (entry.isFile() && formatOf(entry.name) !== null) files.push(p);
        continue;
      }
      let target: string;
      try {
        target = realpathSync(p);
      } catch {
        if (formatOf(entry.name) !== null) skipped.push({ file: portable(relative(dir, p)), error: 'a symbolic link to nothing (its target is gone)' });
        continue;
      }
      const stat = statSync(target);
      if (stat.isDirectory()) {
        if (above.includes(target)) skipped.push({ file: portable(relative(dir, p)), error: `a symbolic link back to ${target}, a folder it is inside: a loop, not followed` });
        else walk(p, [...above, target]);
      } else if (stat.isFile() && formatOf(entry.name) !== null) files.push(p);
    }
  };
  walk(dir, [realpathSync(dir)]);
  return { files, skipped };
}

/** The MIDI files `walkCorpus` finds. */
export const findMidiFiles = (dir: string): string[] => walkCorpus(dir).files;

const portable = (p: string): string => p.split(sep).join('/');

/** The score files `walkCorpus` finds: what an index must list to be current. */
export const findScoreFiles = (dir: string): string[] => walkCorpus(dir).files;

/** A file's pieces, each named by its path from `root` (and `#id` for one of several), and the pieces of it that could not be read. */
export function readPieces(file: string, root: string, options: ScoreReadOptions = {}): { pieces: Piece[]; skipped: Skipped[] } {
  const path = portable(relative(root, file));
  const read = readScoreFile(file, options);
  return {
    pieces: read.pieces.map((p) => ({ path: pieceId(path, p.id), title: p.title, beats: p.beats, key: p.key, meter: p.meters, notes: p.notes })),
    skipped: read.skipped.map((s) => ({ file: pieceId(path, s.id), error: s.error })),
  };
}

/** Loads every score file under `dir` as pieces; files and tunes that cannot be read are listed, not fatal. */
export function loadCorpusFolder(dir: string, options: ScoreReadOptions & { progress?: (done: number, total: number) => void } = {}): { corpus: Corpus; skipped: Skipped[] } {
  const { files, skipped: walked } = walkCorpus(dir);
  const skipped: Skipped[] = [...walked];
  const pieces: Piece[] = [];
  files.forEach((file, i) => {
    try {
      const read = readPieces(file, dir, options);
      for (const piece of read.pieces) {
        if (piece.notes.length === 0) skipped.push({ file: piece.path, error: 'holds no notes' });
        else pieces.push(piece);
      }
      skipped.push(...read.skipped);
    } catch (e) {
      skipped.push({ file: portable(relative(dir, file)), error: unreadableReason(e) });
    }
    options.progress?.(i + 1, files.length);
  });
  return { corpus: { pieces }, skipped };
}

/** Loads query files (files or folders; a tune book gives a query per tune); unreadable ones are listed, not fatal. */
export function loadQueries(paths: readonly string[], options: ScoreReadOptions = {}): { queries: (QueryInput & { folder: string | null })[]; skipped: Skipped[] } {
  const queries: (QueryInput & { folder: string | null })[] = [];
  const skipped: Skipped[] = [];
  for (const p of paths) {
    const isDir = statSafe(p)?.isDirectory() ?? false;
    // A MidiFileError, like any unreadable input: the message names the path, with no stack trace.
    if (!statSafe(p)) throw new MidiFileError(p, 'no such file or folder');
    const found = isDir ? walkCorpus(p) : { files: [p], skipped: [] };
    skipped.push(...found.skipped.map((x) => ({ ...x, file: portable(join(p, x.file)) })));
    for (const file of found.files) addQueries(queries, skipped, portable(file), isDir ? portable(p) : null, () => readScoreFile(file, options));
  }
  return { queries, skipped };
}

/**
 * Queries from files given as bytes (a request's body) in place of paths:
 * Standard MIDI Files, each named as its sender named it. Unreadable ones
 * are listed, not fatal, as `loadQueries` lists them.
 */
export function loadQueryBytes(files: readonly { name: string; bytes: Uint8Array }[], options: ScoreReadOptions = {}): { queries: (QueryInput & { folder: string | null })[]; skipped: Skipped[] } {
  const queries: (QueryInput & { folder: string | null })[] = [];
  const skipped: Skipped[] = [];
  for (const f of files) addQueries(queries, skipped, f.name, null, () => midiScore(parseMidi(f.bytes, f.name, options)));
  return { queries, skipped };
}

/** The pieces of one file as queries named `file` (`file#id` for a tune of several); the file or its pieces that cannot be read, as skipped. */
function addQueries(queries: (QueryInput & { folder: string | null })[], skipped: Skipped[], file: string, folder: string | null, read: () => ScoreFile): void {
  try {
    const score = read();
    for (const piece of score.pieces) queries.push({ file: pieceId(file, piece.id), notes: piece.notes, meter: piece.meters, folder });
    for (const s of score.skipped) skipped.push({ file: pieceId(file, s.id), error: s.error });
  } catch (e) {
    skipped.push({ file, error: unreadableReason(e) });
  }
}

function statSafe(p: string) {
  try {
    return statSync(p);
  } catch {
    return null;
  }
}

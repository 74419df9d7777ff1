/**
 * Finding MIDI files on disk and loading them as corpus pieces or queries.
 * An unreadable file is skipped with its reason, never a crash. Symbolic
 * links to files and folders are followed (a folder of links is a common
 * way to pick a subset of a large collection); a link that leads back into
 * a folder being walked is a loop, reported and not followed.
 *
 * @example
 *   walkCorpus('picks')   // → { files: ['picks/reel.mid', …], skipped: [{ file: 'loop', error: 'a link back to …' }] }
 */
import { readdirSync, realpathSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import type { Corpus, Piece } from '../../core/corpus.js';
import type { QueryInput } from '../../core/report.js';
import { type MidiReadOptions, MidiFileError, readMidi } from '../formats/midi-file.js';

export const isMidiPath = (p: string): boolean => /\.midi?$/i.test(p);

export interface Skipped {
  file: string;
  error: string;
}

/**
 * Every .mid/.midi file under `dir`, recursively, in a stable order, links
 * followed; a link back into a folder on the way down (a loop), or a link
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
        else if (entry.isFile() && isMidiPath(entry.name)) files.push(p);
        continue;
      }
      let target: string;
      try {
        target = realpathSync(p);
      } catch {
        if (isMidiPath(entry.name)) skipped.push({ file: portable(relative(dir, p)), error: 'a symbolic link to nothing (its target is gone)' });
        continue;
      }
      const stat = statSync(target);
      if (stat.isDirectory()) {
        if (above.includes(target)) skipped.push({ file: portable(relative(dir, p)), error: `a symbolic link back to ${target}, a folder it is inside: a loop, not followed` });
        else walk(p, [...above, target]);
      } else if (stat.isFile() && isMidiPath(entry.name)) files.push(p);
    }
  };
  walk(dir, [realpathSync(dir)]);
  return { files, skipped };
}

/** The MIDI files `walkCorpus` finds. */
export const findMidiFiles = (dir: string): string[] => walkCorpus(dir).files;

const portable = (p: string): string => p.split(sep).join('/');

export function readPiece(file: string, root: string, options: MidiReadOptions = {}): Piece {
  const m = readMidi(file, options);
  return { path: portable(relative(root, file)), title: m.title, beats: m.beats, key: m.key, meter: m.meter, notes: m.notes };
}

const reason = (e: unknown): string => (e instanceof MidiFileError ? e.reason : (e as Error).message);

/** Loads every MIDI file under `dir` as a piece; files that cannot be read are listed, not fatal. */
export function loadCorpusFolder(dir: string, options: MidiReadOptions & { progress?: (done: number, total: number) => void } = {}): { corpus: Corpus; skipped: Skipped[] } {
  const { files, skipped } = walkCorpus(dir);
  const pieces: Piece[] = [];
  files.forEach((file, i) => {
    try {
      const piece = readPiece(file, dir, options);
      if (piece.notes.length === 0) skipped.push({ file: portable(relative(dir, file)), error: 'holds no notes' });
      else pieces.push(piece);
    } catch (e) {
      skipped.push({ file: portable(relative(dir, file)), error: reason(e) });
    }
    options.progress?.(i + 1, files.length);
  });
  return { corpus: { pieces }, skipped };
}

/** Loads query files (files or folders); unreadable ones are listed, not fatal. */
export function loadQueries(paths: readonly string[], options: MidiReadOptions = {}): { queries: (QueryInput & { folder: string | null })[]; skipped: Skipped[] } {
  const queries: (QueryInput & { folder: string | null })[] = [];
  const skipped: Skipped[] = [];
  for (const p of paths) {
    const isDir = statSafe(p)?.isDirectory() ?? false;
    // A MidiFileError, like any unreadable input: the message names the path, with no stack trace.
    if (!statSafe(p)) throw new MidiFileError(p, 'no such file or folder');
    const found = isDir ? walkCorpus(p) : { files: [p], skipped: [] };
    skipped.push(...found.skipped.map((x) => ({ ...x, file: portable(join(p, x.file)) })));
    for (const file of found.files) {
      try {
        const m = readMidi(file, options);
        queries.push({ file: portable(file), notes: m.notes, meter: m.meter, folder: isDir ? portable(p) : null });
      } catch (e) {
        skipped.push({ file: portable(file), error: reason(e) });
      }
    }
  }
  return { queries, skipped };
}

function statSafe(p: string) {
  try {
    return statSync(p);
  } catch {
    return null;
  }
}

/**
 * `--corpus PATH`: a folder of score files (MIDI, MusicXML, ABC), or a corpus
 * index file written by `earwitness corpus build`. A folder holding a
 * current index (every score file's size and mtime as indexed) is opened through the index; a folder
 * whose index is out of date is read file by file, with a note saying so.
 *
 * Opened through an index, pieces read their notes from it only when first
 * asked (an excerpt, say), and point sets come straight from its arrays, so
 * a corpus of millions of notes opens in about a second.
 *
 * @example
 *   const opened = openCorpus('songs', { pitch: 'chromatic' });
 *   const view = opened.view('chromatic');
 *   const matcher = opened.matcher(view, 16, false);   // the index's matcher when there is one
 *   new StreamingMatch(opened.index('chromatic'), { windowBeats: 16 })   // live matching
 */
import { readdirSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { type Corpus, type CorpusPoints, type Piece, corpusPoints } from '../core/corpus.js';
import type { PitchMode, Point } from '../core/note.js';
import { type WindowMatcher, exactMatcher } from '../core/match.js';
import { notePoints, pieceNotes } from '../core/flat-notes.js';
import { type CorpusIndex, type FlatPoints, buildTriples, corpusIndex, flattenPoints, piecePoints } from '../core/triple-index.js';
import { indexMatcher } from '../core/index-match.js';
import { type Skipped, findScoreFiles, loadCorpusFolder } from './corpus-files.js';
import { type IndexContents, type Meta, INDEX_NAME, IndexFileError, readIndexFile, readIndexMeta } from './index-file.js';
import { progressBar } from './progress.js';
import { UsageError } from './usage.js';

export interface OpenedCorpus {
  source: string;
  corpus: Corpus;
  skipped: Skipped[];
  /** The index file the corpus came from, or null when it was read from its score files. */
  indexFile: string | null;
  /** The point sets of one pitch dimension. */
  view(mode: PitchMode): CorpusPoints;
  /** The exact-mode matcher for a view: the index's, unless `exact` or there is no index. */
  matcher(view: CorpusPoints, windowBeats: number, exact?: boolean): WindowMatcher;
  /** The corpus index of a pitch dimension, for StreamingMatch: the file's, or built in memory for a folder read file by file. */
  index(mode: PitchMode): CorpusIndex;
  /** The index file's index of a pitch dimension, or undefined for a corpus read from its score files. */
  storedIndex(mode: PitchMode): CorpusIndex | undefined;
}

export interface OpenOptions {
  percussion?: boolean;
  /** The pitch dimension to load the index's postings for first. */
  pitch?: PitchMode;
  /**
   * Read an index's note sections that matching does not need only when first
   * used (the default). False reads everything now, for a caller that must
   * never go back to the file: the daemon's worker, whose index may be
   * rebuilt or deleted while it listens.
   */
  deferNotes?: boolean;
}

/** Why a folder's index is not current, or null when it is. */
function staleness(dir: string, meta: Meta, percussion: boolean): string | null {
  if (meta.percussion !== percussion) return `it was built ${meta.percussion ? 'with' : 'without'} --percussion`;
  const files = findScoreFiles(dir);
  if (files.length !== meta.files.length) return `it lists ${meta.files.length} score files, the folder has ${files.length}`;
  const known = new Map(meta.files.map((f) => [f.path, f]));
  for (const file of files) {
    const was = known.get(relative(dir, file).split(sep).join('/'));
    const now = statSync(file);
    if (!was || was.size !== now.size || was.mtimeMs !== now.mtimeMs) return `${relative(dir, file)} is new or changed`;
  }
  return null;
}

/** Runs `read`, turning an unusable index into a usage error: the index's sections are read as they are first needed. */
function fromFile<T>(read: () => T): T {
  try {
    return read();
  } catch (e) {
    if (e instanceof IndexFileError) throw new UsageError(e.message);
    throw e;
  }
}

/** Pieces whose notes are read from the index when first used: most code never asks. */
function lazyPieces(contents: IndexContents): Piece[] {
  return contents.pieces.map((info, i) => {
    let notes: Piece['notes'] | null = null;
    return Object.defineProperty({ ...info }, 'notes', { enumerable: true, get: () => (notes ??= fromFile(() => pieceNotes(contents.notes, i))) }) as Piece;
  });
}

/** A view over flat points whose Point arrays are made per piece on first use (the baseline samples a few; --exact uses all). */
function flatView(mode: PitchMode, pieces: readonly Piece[], flat: FlatPoints): CorpusPoints {
  const points: Point[][] = new Array(pieces.length);
  for (let p = 0; p < pieces.length; p++) {
    let made: Point[] | null = null;
    Object.defineProperty(points, p, { enumerable: true, get: () => (made ??= piecePoints(flat, p)) });
  }
  return { mode, pieces, points, size: flat.at.length };
}

function fromIndex(file: string, options: OpenOptions): OpenedCorpus {
  const deferNotes = options.deferNotes ?? true;
  const contents = fromFile(() => readIndexFile(file, [options.pitch ?? 'chromatic'], { deferNotes }));
  if (contents.percussion !== (options.percussion ?? false)) {
    throw new UsageError(`--corpus ${file}: the index was built ${contents.percussion ? 'with' : 'without'} --percussion; rebuild it with the same choice, or leave the option ${contents.percussion ? 'on' : 'off'}`);
  }
  const pieces = lazyPieces(contents);
  const indexes = new Map<PitchMode, CorpusIndex>();
  const points = new Map<PitchMode, FlatPoints>();
  const pointsOf = (mode: PitchMode): FlatPoints => points.get(mode) ?? points.set(mode, fromFile(() => notePoints(contents.notes, mode))).get(mode)!;
  const indexOf = (mode: PitchMode): CorpusIndex => {
    const known = indexes.get(mode);
    if (known) return known;
    const postings = contents.postings[mode] ?? fromFile(() => readIndexFile(file, [mode], { deferNotes })).postings[mode]!;
    return indexes.set(mode, corpusIndex({ ...postings, points: pointsOf(mode), shape: contents.shape })).get(mode)!;
  };
  return {
    source: file,
    corpus: { pieces },
    skipped: contents.files.filter((f) => f.error !== null).map((f) => ({ file: f.path, error: f.error! })),
    indexFile: file,
    view: (mode) => flatView(mode, pieces, pointsOf(mode)),
    matcher: (view, windowBeats, exact) => (exact ? exactMatcher(view, windowBeats) : indexMatcher(indexOf(view.mode), windowBeats)),
    index: indexOf,
    storedIndex: indexOf,
  };
}

function fromFolder(dir: string, options: OpenOptions): OpenedCorpus {
  const bar = progressBar('reading corpus');
  const { corpus, skipped } = loadCorpusFolder(dir, { percussion: options.percussion, progress: bar.tick });
  bar.stop();
  for (const s of skipped) process.stderr.write(`earwitness: skipped ${s.file}: ${s.error}\n`);
  if (corpus.pieces.length === 0) throw new UsageError(`--corpus ${dir}: holds no readable score file (MIDI, MusicXML or ABC) with notes`);
  const built = new Map<PitchMode, CorpusIndex>();
  return {
    source: dir,
    corpus,
    skipped,
    indexFile: null,
    view: (mode) => corpusPoints(corpus, mode),
    matcher: (view, windowBeats) => exactMatcher(view, windowBeats),
    index: (mode) => built.get(mode) ?? built.set(mode, corpusIndex(buildTriples(flattenPoints(corpusPoints(corpus, mode))))).get(mode)!,
    storedIndex: () => undefined,
  };
}

export function openCorpus(path: string, options: OpenOptions = {}): OpenedCorpus {
  let isDir: boolean;
  try {
    isDir = statSync(path).isDirectory();
  } catch {
    throw new UsageError(`--corpus ${path}: no such folder or index file`);
  }
  if (!isDir) return fromIndex(path, options);
  const file = join(path, INDEX_NAME);
  if (!readdirSync(path).includes(INDEX_NAME)) return fromFolder(path, options);
  let why: string | null;
  try {
    why = staleness(path, readIndexMeta(file), options.percussion ?? false);
  } catch (e) {
    if (!(e instanceof IndexFileError)) throw e;
    why = e.reason;
  }
  if (why === null) return fromIndex(file, options);
  process.stderr.write(`earwitness: not using ${file} (${why}); reading the score files instead. Run "earwitness corpus build ${path}" to bring the index up to date.\n`);
  return fromFolder(path, options);
}


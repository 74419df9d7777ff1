/**
 * `--corpus PATH`: a folder of score files (MIDI, MusicXML, ABC), a corpus
 * index file written by `earwitness corpus build`, or the shard manifest of
 * `corpus build --shards` (bridge/corpus/sharded-corpus.ts). A folder holding a
 * current index (every score file's size and mtime as indexed) is opened through the index; a folder
 * whose index is out of date is read file by file, with a note saying so.
 *
 * Opened through an index, a piece's notes and points are read from it only
 * when matching or an excerpt first touches the piece, so opening reads
 * nothing per note however large the corpus (test/bench/RESULTS.md, load).
 *
 * Either way, `matcher` is the one entry point to matching (core/pipeline.ts):
 * a folder builds in memory the triple index and fingerprint table that
 * `corpus build` stores, so a folder and its index give the same numbers.
 *
 * @example
 *   const opened = openCorpus('songs', { pitch: 'chromatic' });
 *   const matcher = opened.matcher({ pitch: 'chromatic', window: 16, mode: { tolerance: 0.1, tempoFree: false } });
 *   matcher.best({ points, startGrains: 0 })
 *   new LiveMatcher(opened.matchCorpus('chromatic'), { windowBeats: 16, mode })   // live matching
 */
import { readdirSync, statSync } from 'node:fs';
import { join, relative, sep } from 'node:path';
import { type Corpus, type CorpusPoints, type Piece, corpusPoints } from '../../core/corpus.js';
import type { Note, PitchMode, Point } from '../../core/note.js';
import type { WindowMatcher } from '../../core/match.js';
import { type GrainSpan, notePoints, pieceNotes } from '../../core/flat-notes.js';
import { notesWithin } from '../../core/review.js';
import { type CorpusIndex, type FlatPoints, buildTriples, corpusIndex, flattenPoints, piecePoints } from '../../core/triple-index.js';
import { type FingerprintTable, type StoredFingerprints, buildFingerprints } from '../../core/fingerprint.js';
import { type MatchCorpus, type MatchMode, candidatesFor, windowMatcher } from '../../core/pipeline.js';
import { type Skipped, findScoreFiles, loadCorpusFolder } from './corpus-files.js';
import { type IndexContents, type Meta, INDEX_NAME, IndexFileError, readIndexFile, readIndexMeta } from '../formats/index-file.js';
import { UsageError } from '../formats/user-error.js';
import { looksLikeManifest } from '../formats/shard-manifest.js';
import { openShards } from './sharded-corpus.js';

export interface OpenedCorpus {
  source: string;
  corpus: Corpus;
  /** Notes the corpus holds, counted without making them (a piece's `notes` made from an index are read from it). */
  notes: number;
  skipped: Skipped[];
  /** The index file the corpus came from, or null when it was read from its score files. */
  indexFile: string | null;
  /** The point sets of one pitch dimension. */
  view(mode: PitchMode): CorpusPoints;
  /** A piece's notes with ontime in a span, without making the rest of the piece's: what a live verdict's excerpt shows, once a note. */
  notesIn(piece: number, span: GrainSpan): Note[];
  /** What matching reads for a pitch dimension: the points, the triple index and the fingerprint table (the file's, or built in memory for a folder). */
  matchCorpus(mode: PitchMode): MatchCorpus & { index: CorpusIndex };
  /**
   * The matcher every batch command scores with: candidates from the triple
   * index, or every translation with `exact` or on a corpus small enough
   * (core/pipeline.ts candidatesFor); verified in the mode; distinctiveness counted.
   */
  matcher(request: MatcherRequest): WindowMatcher;
}

export interface MatcherRequest {
  pitch: PitchMode;
  window: number;
  mode: MatchMode;
  /** Verify every translation: the reference, slow on a large corpus. */
  exact?: boolean;
}

/** The one entry point: a corpus's matcher for a pitch dimension, window and mode. */
function matcherOf(opened: Pick<OpenedCorpus, 'matchCorpus'>, request: MatcherRequest): WindowMatcher {
  const corpus = opened.matchCorpus(request.pitch);
  return windowMatcher(corpus, { windowBeats: request.window, mode: request.mode, candidates: candidatesFor(corpus.flat.at.length, request.exact ?? false) });
}

/** A value made by `make` the first time it is asked for, per pitch dimension. */
function perMode<T>(make: (mode: PitchMode) => T): (mode: PitchMode) => T {
  const made = new Map<PitchMode, T>();
  return (mode) => made.get(mode) ?? made.set(mode, make(mode)).get(mode)!;
}

export interface OpenOptions {
  percussion?: boolean;
  /** The pitch dimension to load the index's postings for first. */
  pitch?: PitchMode;
  /**
   * For an index written before the pieces' checksums were stored: read its
   * note sections that matching does not need only when first used (the
   * default). False reads every note now, for a caller whose index may be
   * rebuilt or deleted while it runs: the daemon's workers. (Any other
   * index's notes are read a piece at a time, and every index's postings and
   * fingerprints a key at a time, through the file held open since it was
   * opened, so a rebuild or deletion does not touch them:
   * bridge/formats/index-file.ts `onDemand`.)
   */
  deferNotes?: boolean;
  /**
   * Read an index's postings for `pitch` now (the default). False reads
   * them only if matching here asks: `--queue`, where the shards' workers match.
   */
  matching?: boolean;
  /** Told how far reading a folder file by file has got. */
  progress?: (done: number, total: number) => void;
  /**
   * Told, as it happens, each thing the user should hear about: a file
   * skipped and why, an out-of-date index not used. Nothing is printed here;
   * the CLI prints these lines.
   */
  notify?: (line: string) => void;
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
  // Postings and fingerprints a key's run at a time, as matching first votes from the key: what a session touches of a large index.
  const contents = fromFile(() => readIndexFile(file, options.matching === false ? [] : [options.pitch ?? 'chromatic'], { deferNotes, onDemand: true }));
  if (contents.percussion !== (options.percussion ?? false)) {
    throw new UsageError(`--corpus ${file}: the index was built ${contents.percussion ? 'with' : 'without'} --percussion; rebuild it with the same choice, or leave the option ${contents.percussion ? 'on' : 'off'}`);
  }
  const pieces = lazyPieces(contents);
  const pointsOf = perMode((mode) => fromFile(() => contents.points?.(mode) ?? notePoints(contents.notes, mode)));
  const matchCorpus = perMode((mode) => {
    const postings = contents.postings[mode] ?? fromFile(() => readIndexFile(file, [mode], { deferNotes, onDemand: true })).postings[mode]!;
    const read = contents.fingerprints[mode] as () => StoredFingerprints;
    let table: StoredFingerprints | null = null;
    return { flat: pointsOf(mode), index: corpusIndex({ ...postings, points: pointsOf(mode), shape: contents.shape }), fingerprints: () => (table ??= fromFile(read)) };
  });
  const opened = {
    source: file,
    corpus: { pieces },
    notes: contents.notes.offsets[pieces.length],
    skipped: contents.files.filter((f) => f.error !== null).map((f) => ({ file: f.path, error: f.error! })),
    indexFile: file,
    view: (mode: PitchMode) => flatView(mode, pieces, pointsOf(mode)),
    notesIn: (piece: number, span: GrainSpan) => fromFile(() => pieceNotes(contents.notes, piece, span)),
    matchCorpus,
  };
  return { ...opened, matcher: (request) => matcherOf(opened, request) };
}

function fromFolder(dir: string, options: OpenOptions): OpenedCorpus {
  const { corpus, skipped } = loadCorpusFolder(dir, { percussion: options.percussion, progress: options.progress });
  for (const s of skipped) options.notify?.(`skipped ${s.file}: ${s.error}`);
  if (corpus.pieces.length === 0) throw new UsageError(`--corpus ${dir}: holds no readable score file (MIDI, MusicXML or ABC) with notes`);
  const matchCorpus = perMode((mode) => {
    const flat = flattenPoints(corpusPoints(corpus, mode));
    let table: FingerprintTable | null = null;
    return { flat, index: corpusIndex(buildTriples(flat)), fingerprints: () => (table ??= buildFingerprints(flat)) };
  });
  const opened = { source: dir, corpus, notes: corpus.pieces.reduce((n, p) => n + p.notes.length, 0), skipped, indexFile: null, view: (mode: PitchMode) => corpusPoints(corpus, mode), notesIn: (piece: number, span: GrainSpan) => notesWithin(corpus.pieces[piece].notes, span), matchCorpus };
  return { ...opened, matcher: (request) => matcherOf(opened, request) };
}

export function openCorpus(path: string, options: OpenOptions = {}): OpenedCorpus {
  let isDir: boolean;
  try {
    isDir = statSync(path).isDirectory();
  } catch {
    throw new UsageError(`--corpus ${path}: no such folder or index file`);
  }
  if (!isDir) return looksLikeManifest(path) ? openShards(path, options) : fromIndex(path, options);
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
  options.notify?.(`not using ${file} (${why}); reading the score files instead. Run "earwitness corpus build ${path}" to bring the index up to date.`);
  return fromFolder(path, options);
}


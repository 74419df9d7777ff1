/**
 * Writing an index (bridge/formats/index-file.md) from pieces given a few at
 * a time, in memory bounded whatever the corpus's size: `corpus build`'s
 * writer. Each piece's notes go to a spill file per note field, and its
 * triples and fingerprint triples, per pitch dimension, to a bucket spill
 * (bridge/formats/spill.ts). `finish` then writes the file: the notes copied
 * over, and each pitch dimension's tables, in a thread of its own, both at
 * once (bridge/formats/pitch-tables.ts), bucket by bucket in key order, each
 * bucket sorted in memory within `sortBytes`. The file holds byte for byte
 * the sections writeIndexFile writes from the same pieces held in memory,
 * in another order.
 *
 * What it holds at once: the spills' buffers (about 45 MB) while pieces
 * come; then one sorted bucket per thread (at most `sortBytes` each); and
 * per piece its name and an offset (the META section lists every piece and
 * file).
 *
 * @example
 *   const build = new IndexBuilder('songs/.earwitness-index', { percussion: false });
 *   build.add(piecesOfOneFile, theirNotes);   // … for every file, in order
 *   build.finish({ files });                  // → (a promise of) { pieces: 120, notes: 81234, … }
 */
import { mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { Worker } from 'node:worker_threads';
import { PITCH_MODES, type PitchMode } from '../../core/note.js';
import { type FlatNotes, notePoints } from '../../core/flat-notes.js';
import { CORPUS_TRIPLES, MAX_PIECES, type TripleShape, tripleRecords } from '../../core/triple-index.js';
import { FINGERPRINT_SHAPE, type FingerprintShape, fingerprintRecords } from '../../core/fingerprint.js';
import { type FileFingerprint, type PieceInfo, type ShardOf, IndexWriter, MODE_LETTER, MODE_SECTION_COUNT, NOTE_SECTIONS, NOTE_SECTION_COUNT, PIECE_CHECKS, POINT_OFFSETS, metaBytes, pieceChecks } from './index-file.js';
import { AppendFile, BucketSpill, type RecordLayout, bytesOf, filePieces } from './spill.js';
import { type TablesJob, type TablesWritten, writeTables } from './pitch-tables.js';

export interface IndexBuildOptions {
  percussion: boolean;
  shape?: TripleShape;
  fingerprint?: FingerprintShape;
  /** Memory one bucket may take while it is sorted, bytes, in each pitch dimension's thread (default 1 GiB). */
  sortBytes?: number;
  /** Whether each pitch dimension's tables are written in a thread of their own (default: when there are THREADS_FROM records or more). */
  threads?: boolean;
  /** Where that thread's code is (default: beside this module once built, in dist/; tests run from the sources point here). */
  threadUrl?: URL;
}

/** What a finished build wrote. */
export interface IndexBuilt {
  pieces: number;
  notes: number;
  /** Each pitch dimension's points. */
  points: Record<PitchMode, number>;
}

const TRIPLE_LAYOUT: RecordLayout = { halves: 2, fields: ['u32'] };
const FINGERPRINT_LAYOUT: RecordLayout = { halves: 1, fields: ['u32', 'u8'] };
const DEFAULT_SORT_BYTES = 2 ** 30;
/** Notes an index holds at most: postings are 32-bit note numbers. */
const MAX_NOTES = 2 ** 32 - 1;

/** A build's spill folder: this, its process id, a dash and a random suffix. */
const SPILL_PREFIX = '.earwitness-build-';

const alive = (pid: number): boolean => {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
};

/** Removes the spill folders in `dir` left by builds whose process is gone (stopped by a signal, say); returns their paths. */
function removeStaleSpills(dir: string): string[] {
  const stale = readdirSync(dir).filter((name) => {
    const pid = /^\.earwitness-build-(\d+)-/.exec(name)?.[1];
    return pid !== undefined && Number(pid) !== process.pid && !alive(Number(pid));
  });
  for (const name of stale) rmSync(join(dir, name), { recursive: true, force: true });
  return stale.map((name) => join(dir, name));
}

export class IndexBuilder {
  private readonly dir: string;
  private readonly shape: TripleShape;
  private readonly fingerprint: FingerprintShape;
  private readonly sortBytes: number;
  private readonly pieces: PieceInfo[] = [];
  private offsets: number[] = [0];
  private noteCount = 0;
  private readonly noteFiles: AppendFile[];
  /** Each piece's note checksums (PIECE_CHECKS). */
  private readonly checks: AppendFile;
  private readonly spills: Record<PitchMode, { triples: BucketSpill; fingerprints: BucketSpill; points: number; offsets: AppendFile }>;
  private done = false;
  /** Spill folders of builds stopped before they finished (their process is gone), found beside the index and removed. */
  readonly staleRemoved: string[];
  private removed = false;
  /** The index being written, once `finish` has begun. */
  private writer: IndexWriter | null = null;

  constructor(readonly file: string, private readonly options: IndexBuildOptions) {
    this.shape = options.shape ?? CORPUS_TRIPLES;
    this.fingerprint = options.fingerprint ?? FINGERPRINT_SHAPE;
    this.sortBytes = options.sortBytes ?? DEFAULT_SORT_BYTES;
    // Beside the index, on the disk the user chose for it: the spills take about 1.8 times the index's size.
    this.staleRemoved = removeStaleSpills(dirname(file));
    this.dir = mkdtempSync(join(dirname(file), `${SPILL_PREFIX}${process.pid}-`));
    this.noteFiles = NOTE_SECTIONS.slice(1).map(([tag]) => new AppendFile(join(this.dir, tag)));
    this.checks = new AppendFile(join(this.dir, PIECE_CHECKS));
    const spill = (mode: PitchMode) => {
      const offsets = new AppendFile(join(this.dir, `${mode}-${POINT_OFFSETS}`));
      offsets.append(Uint32Array.of(0));
      return {
        triples: new BucketSpill(join(this.dir, `${mode}-triples`), TRIPLE_LAYOUT),
        fingerprints: new BucketSpill(join(this.dir, `${mode}-fingerprints`), FINGERPRINT_LAYOUT),
        points: 0,
        offsets,
      };
    };
    this.spills = { chromatic: spill('chromatic'), morphetic: spill('morphetic') };
  }

  /** Notes written so far. */
  get notes(): number {
    return this.noteCount;
  }

  /** Adds pieces, after those added before: `notes` holds theirs (its offsets from 0, as flattenNotes makes them). */
  add(pieces: readonly PieceInfo[], notes: FlatNotes): void {
    if (this.done) throw new Error(`${this.file}: pieces added after the build finished`);
    if (notes.offsets.length !== pieces.length + 1) throw new RangeError(`${pieces.length} pieces given with notes for ${notes.offsets.length - 1}`);
    if (notes.offsets[0] !== 0 || notes.offsets[pieces.length] !== notes.at.length) throw new RangeError(`the notes' offsets run from ${notes.offsets[0]} to ${notes.offsets[pieces.length]}; expected 0 to ${notes.at.length}, their count`);
    if (this.pieces.length + pieces.length > MAX_PIECES) throw new RangeError(`an index holds at most ${MAX_PIECES} pieces; this corpus has more`);
    if (this.notes + notes.at.length > MAX_NOTES) throw new RangeError(`an index holds fewer than 2^32 notes; this corpus has more`);
    const base = this.notes;
    this.pieces.push(...pieces);
    for (let p = 1; p <= pieces.length; p++) this.offsets.push(base + notes.offsets[p]);
    this.noteCount += notes.at.length;
    NOTE_SECTIONS.slice(1).forEach(([, field], i) => this.noteFiles[i].append(notes[field] as Uint8Array));
    this.checks.append(pieceChecks(notes));
    for (const mode of PITCH_MODES) {
      const points = notePoints(notes, mode);
      const spill = this.spills[mode];
      spill.triples.add(tripleRecords(points, this.shape, spill.points));
      spill.fingerprints.add(fingerprintRecords(points, this.fingerprint, spill.points));
      spill.offsets.append(points.offsets.subarray(1).map((o) => o + spill.points));
      spill.points += points.at.length;
    }
  }

  /**
   * Writes the index file and removes the spills. Each pitch dimension's
   * tables are sorted and written in a thread of its own, both at once (in
   * this thread for a corpus too small to be worth starting them);
   * `progress` is told the records written of all there are.
   */
  async finish(rest: { files: FileFingerprint[]; shard?: ShardOf }, progress: (done: number, total: number) => void = () => {}): Promise<IndexBuilt> {
    if (this.done) throw new Error(`${this.file}: the build already finished`);
    this.done = true;
    const out = new IndexWriter(this.file, NOTE_SECTION_COUNT + PITCH_MODES.length * MODE_SECTION_COUNT);
    this.writer = out;
    try {
      const contents = { shape: this.shape, fingerprint: this.fingerprint, percussion: this.options.percussion, pieces: this.pieces, files: rest.files, ...(rest.shard ? { shard: rest.shard } : {}) };
      out.whole('META', metaBytes(contents, this.notes, [...PITCH_MODES]));
      out.whole('NOFS', bytesOf(Uint32Array.from(this.offsets)));
      this.offsets = [];
      NOTE_SECTIONS.slice(1).forEach(([tag], i) => {
        this.noteFiles[i].close();
        copyInto(out, tag, this.noteFiles[i].path);
      });
      this.checks.close();
      copyInto(out, PIECE_CHECKS, this.checks.path);
      const jobs = PITCH_MODES.map((mode) => {
        const [triples, fingerprints] = [this.spills[mode].triples.close(), this.spills[mode].fingerprints.close()];
        const letter = MODE_LETTER[mode];
        // The sections of known length are kept now, and written by the dimension's thread.
        const kept = { anchors: out.keep(`${letter}ANC`, 4 * triples.count), fingerprintAnchors: out.keep(`${letter}FAN`, 4 * fingerprints.count), codes: out.keep(`${letter}FCD`, fingerprints.count) };
        const place = { file: out.temp, anchors: kept.anchors.offset, fingerprintAnchors: kept.fingerprintAnchors.offset, codes: kept.codes.offset };
        return { mode, kept, job: { dir: this.dir, mode, triples, fingerprints, sortBytes: this.sortBytes, place } satisfies TablesJob };
      });
      const total = jobs.reduce((n, { job }) => n + job.triples.count + job.fingerprints.count, 0);
      let written = 0;
      const wrote = (records: number): void => progress((written += records), total);
      const threads = this.options.threads ?? total >= THREADS_FROM;
      const url = this.options.threadUrl ?? THREAD_URL;
      const results = await Promise.all(jobs.map(({ job }) => (threads ? inThread(url, job, wrote) : writeTables(job, wrote))));
      jobs.forEach(({ mode, kept }, i) => {
        const tables = results[i];
        kept.anchors.end(tables.crcs.anchors);
        kept.fingerprintAnchors.end(tables.crcs.fingerprintAnchors);
        kept.codes.end(tables.crcs.codes);
        const letter = MODE_LETTER[mode];
        this.spills[mode].offsets.close();
        copyInto(out, letter + POINT_OFFSETS, this.spills[mode].offsets.path);
        copyInto(out, `${letter}KEY`, tables.keys);
        copyInto(out, `${letter}RUN`, tables.starts);
        copyInto(out, `${letter}FKY`, tables.fingerprintKeys);
        copyInto(out, `${letter}FRN`, tables.fingerprintStarts);
      });
      out.close();
      return { pieces: this.pieces.length, notes: this.notes, points: { chromatic: this.spills.chromatic.points, morphetic: this.spills.morphetic.points } };
    } catch (e) {
      out.abort();
      throw e;
    } finally {
      this.remove();
    }
  }

  /** Leaves nothing behind, not even the part of the index written: for a build stopped part way. */
  abort(): void {
    this.done = true;
    this.writer?.abort();
    this.remove();
  }

  private remove(): void {
    if (this.removed) return;
    this.removed = true;
    for (const f of [...this.noteFiles, this.checks]) f.close();
    for (const mode of PITCH_MODES) {
      this.spills[mode].offsets.close();
      this.spills[mode].triples.remove();
      this.spills[mode].fingerprints.remove();
    }
    rmSync(this.dir, { recursive: true, force: true });
  }
}

/** Records (both dimensions, both tables) from which the tables are written in threads: below, starting them costs more than it saves. */
const THREADS_FROM = 2_000_000;

const THREAD_URL = new URL('./pitch-tables-worker.js', import.meta.url);

/** A dimension's tables written in a thread of its own (bridge/formats/pitch-tables-worker.ts). */
function inThread(url: URL, job: TablesJob, wrote: (records: number) => void): Promise<TablesWritten> {
  return new Promise((resolve, reject) => {
    const worker = new Worker(url, { workerData: job });
    let answered = false;
    worker.on('message', (m: { progress?: number; written?: TablesWritten; error?: string }) => {
      if (m.progress !== undefined) wrote(m.progress);
      else {
        answered = true;
        if (m.written) resolve(m.written);
        else reject(new Error(`writing the ${job.mode} tables: ${m.error}`));
      }
    });
    worker.on('error', (e) => reject(new Error(`writing the ${job.mode} tables: ${e.message}`)));
    worker.on('exit', (code) => {
      if (!answered) reject(new Error(`writing the ${job.mode} tables: its thread stopped (exit code ${code})`));
    });
  });
}

/** An index of pieces all at hand, written as `corpus build` writes one. */
export function buildIndexFile(file: string, contents: { pieces: PieceInfo[]; notes: FlatNotes; files: FileFingerprint[]; percussion: boolean; shard?: ShardOf }): Promise<IndexBuilt> {
  const builder = new IndexBuilder(file, { percussion: contents.percussion });
  try {
    builder.add(contents.pieces, contents.notes);
  } catch (e) {
    builder.abort();
    throw e;
  }
  return builder.finish({ files: contents.files, ...(contents.shard ? { shard: contents.shard } : {}) });
}

/** A section whose bytes are a file's. */
function copyInto(out: IndexWriter, tag: string, path: string): void {
  const s = out.section(tag, statSync(path).size);
  for (const piece of filePieces(path)) s.write(piece);
  s.end();
}

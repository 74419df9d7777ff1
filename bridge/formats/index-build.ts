/**
 * Writing an index (bridge/formats/index-file.md) from pieces given a few at
 * a time, in memory bounded whatever the corpus's size: `corpus build`'s
 * writer. Each piece's notes go to a spill file per note field, and its
 * triples and fingerprint triples, per pitch dimension, to a bucket spill
 * (bridge/formats/spill.ts). `finish` then writes the file: the notes copied
 * over, and each table bucket by bucket in key order, each bucket sorted in
 * memory within `sortBytes`. The file is byte for byte what writeIndexFile
 * writes from the same pieces held in memory, but for the order of its
 * sections.
 *
 * What it holds at once: the spills' buffers (about 45 MB), one sorted
 * bucket (at most `sortBytes`), and per piece its name and an offset (the
 * META section, written last, lists every piece and file).
 *
 * @example
 *   const build = new IndexBuilder('songs/.earwitness-index', { percussion: false });
 *   build.add(piecesOfOneFile, theirNotes);   // … for every file, in order
 *   build.finish({ files });                  // → { pieces: 120, notes: 81234 }
 */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { PITCH_MODES, type PitchMode } from '../../core/note.js';
import { type FlatNotes, notePoints } from '../../core/flat-notes.js';
import { CORPUS_TRIPLES, MAX_PIECES, type TripleShape, keyOfHalves, tripleRecords } from '../../core/triple-index.js';
import { FINGERPRINT_SHAPE, type FingerprintShape, fingerprintRecords } from '../../core/fingerprint.js';
import { type KeyedRecords, keyDiffers } from '../../core/keyed-sort.js';
import { type FileFingerprint, type PieceInfo, type ShardOf, IndexWriter, MODE_LETTER, MODE_SECTION_COUNT, NOTE_SECTIONS, NOTE_SECTION_COUNT, metaBytes } from './index-file.js';
import { AppendFile, BucketSpill, type RecordLayout, recordBytes } from './spill.js';

export interface IndexBuildOptions {
  percussion: boolean;
  shape?: TripleShape;
  fingerprint?: FingerprintShape;
  /** Memory one bucket may take while it is sorted, bytes (default 1 GiB). */
  sortBytes?: number;
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

const bytesOf = (a: ArrayBufferView): Uint8Array => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

export class IndexBuilder {
  private readonly dir: string;
  private readonly shape: TripleShape;
  private readonly fingerprint: FingerprintShape;
  private readonly sortBytes: number;
  private readonly pieces: PieceInfo[] = [];
  private offsets: number[] = [0];
  private noteCount = 0;
  private readonly noteFiles: AppendFile[];
  private readonly spills: Record<PitchMode, { triples: BucketSpill; fingerprints: BucketSpill; points: number }>;
  private done = false;
  /** Spill folders of builds stopped before they finished (their process is gone), found beside the index and removed. */
  readonly staleRemoved: string[];
  /** Told of each sorted part written, its records. */
  private wrote: (records: number) => void = () => {};
  private removed = false;

  constructor(readonly file: string, private readonly options: IndexBuildOptions) {
    this.shape = options.shape ?? CORPUS_TRIPLES;
    this.fingerprint = options.fingerprint ?? FINGERPRINT_SHAPE;
    this.sortBytes = options.sortBytes ?? DEFAULT_SORT_BYTES;
    // Beside the index, on the disk the user chose for it: the spills take about twice the index's size.
    this.staleRemoved = removeStaleSpills(dirname(file));
    this.dir = mkdtempSync(join(dirname(file), `${SPILL_PREFIX}${process.pid}-`));
    this.noteFiles = NOTE_SECTIONS.slice(1).map(([tag]) => new AppendFile(join(this.dir, tag)));
    const spill = (mode: PitchMode) => ({
      triples: new BucketSpill(join(this.dir, `${mode}-triples`), TRIPLE_LAYOUT),
      fingerprints: new BucketSpill(join(this.dir, `${mode}-fingerprints`), FINGERPRINT_LAYOUT),
      points: 0,
    });
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
    NOTE_SECTIONS.slice(1).forEach(([, field], i) => this.noteFiles[i].append(notes[field]));
    for (const mode of PITCH_MODES) {
      const points = notePoints(notes, mode);
      const spill = this.spills[mode];
      spill.triples.add(tripleRecords(points, this.shape, spill.points));
      spill.fingerprints.add(fingerprintRecords(points, this.fingerprint, spill.points));
      spill.points += points.at.length;
    }
  }

  /** Writes the index file and removes the spills; `progress` is told the records written of all there are, bucket by bucket. */
  finish(rest: { files: FileFingerprint[]; shard?: ShardOf }, progress: (done: number, total: number) => void = () => {}): IndexBuilt {
    if (this.done) throw new Error(`${this.file}: the build already finished`);
    this.done = true;
    const total = PITCH_MODES.reduce((n, mode) => n + this.spills[mode].triples.count + this.spills[mode].fingerprints.count, 0);
    let written = 0;
    this.wrote = (records) => progress((written += records), total);
    const out = new IndexWriter(this.file, NOTE_SECTION_COUNT + PITCH_MODES.length * MODE_SECTION_COUNT);
    try {
      const contents = { shape: this.shape, fingerprint: this.fingerprint, percussion: this.options.percussion, pieces: this.pieces, files: rest.files, ...(rest.shard ? { shard: rest.shard } : {}) };
      out.whole('META', metaBytes(contents, this.notes, [...PITCH_MODES]));
      out.whole('NOFS', bytesOf(Uint32Array.from(this.offsets)));
      this.offsets = [];
      NOTE_SECTIONS.slice(1).forEach(([tag], i) => copyInto(out, tag, this.noteFiles[i]));
      for (const mode of PITCH_MODES) this.writeTriples(out, mode);
      for (const mode of PITCH_MODES) this.writeFingerprints(out, mode);
      out.close();
    } catch (e) {
      out.abort();
      throw e;
    } finally {
      this.remove();
    }
    return { pieces: this.pieces.length, notes: this.notes, points: { chromatic: this.spills.chromatic.points, morphetic: this.spills.morphetic.points } };
  }

  /** Leaves nothing behind: for a build stopped part way. */
  abort(): void {
    this.done = true;
    this.remove();
  }

  private remove(): void {
    if (this.removed) return;
    this.removed = true;
    for (const f of this.noteFiles) f.remove();
    for (const mode of PITCH_MODES) {
      this.spills[mode].triples.remove();
      this.spills[mode].fingerprints.remove();
    }
    rmSync(this.dir, { recursive: true, force: true });
  }

  private writeTriples(out: IndexWriter, mode: PitchMode): void {
    const spill = this.spills[mode].triples;
    const anchors = out.section(`${MODE_LETTER[mode]}ANC`, 4 * spill.count);
    const keys = this.keyRuns(spill, TRIPLE_LAYOUT, `${mode}-keys`, (sorted, i) => keyOfHalves(sorted.hi[i], sorted.lo![i]), Float64Array, (sorted) => anchors.write(bytesOf(sorted.fields[0])));
    anchors.end();
    this.writeRuns(out, `${MODE_LETTER[mode]}KEY`, `${MODE_LETTER[mode]}RUN`, keys, spill.count);
  }

  private writeFingerprints(out: IndexWriter, mode: PitchMode): void {
    const spill = this.spills[mode].fingerprints;
    const anchors = out.section(`${MODE_LETTER[mode]}FAN`, 4 * spill.count);
    const codes = out.section(`${MODE_LETTER[mode]}FCD`, spill.count);
    const keys = this.keyRuns(spill, FINGERPRINT_LAYOUT, `${mode}-fkeys`, (sorted, i) => sorted.hi[i], Uint32Array, (sorted) => {
      anchors.write(bytesOf(sorted.fields[0]));
      codes.write(bytesOf(sorted.fields[1]));
    });
    anchors.end();
    codes.end();
    this.writeRuns(out, `${MODE_LETTER[mode]}FKY`, `${MODE_LETTER[mode]}FRN`, keys, spill.count);
  }

  /**
   * Reads a spill in key order, handing each sorted part to `write`, and
   * appends each distinct key and where its run starts to spill files of
   * their own: their count is known only at the end.
   */
  private keyRuns(
    spill: BucketSpill,
    layout: RecordLayout,
    name: string,
    keyAt: (sorted: KeyedRecords, i: number) => number,
    keyType: Float64ArrayConstructor | Uint32ArrayConstructor,
    write: (sorted: KeyedRecords) => void,
  ): { keys: AppendFile; starts: AppendFile } {
    const keys = new AppendFile(join(this.dir, name));
    const starts = new AppendFile(join(this.dir, `${name}-starts`));
    let before = 0;
    let last: KeyedRecords | null = null;
    // Sorting takes the bucket, a copy of it, and each record's place.
    for (const sorted of spill.sorted(Math.max(1, Math.floor(this.sortBytes / (2 * recordBytes(layout) + 4))))) {
      const n = sorted.hi.length;
      const firsts: number[] = [];
      // A key's run may go on from the part before (one key's records handed over in chunks).
      for (let i = 0; i < n; i++) {
        const fresh = i > 0 ? keyDiffers(sorted, i, i - 1) : last === null || keyAt(sorted, 0) !== keyAt(last, last.hi.length - 1);
        if (fresh) firsts.push(i);
      }
      keys.append(keyType.from(firsts.map((i) => keyAt(sorted, i))));
      starts.append(Uint32Array.from(firsts, (i) => before + i));
      write(sorted);
      this.wrote(n);
      before += n;
      // The last key alone, copied: the part itself is let go.
      if (n > 0) last = { hi: sorted.hi.slice(n - 1), lo: sorted.lo ? sorted.lo.slice(n - 1) : null, fields: [] };
    }
    return { keys, starts };
  }

  private writeRuns(out: IndexWriter, keyTag: string, runTag: string, runs: { keys: AppendFile; starts: AppendFile }, total: number): void {
    try {
      copyInto(out, keyTag, runs.keys);
      const starts = out.section(runTag, runs.starts.size + 4);
      for (const piece of runs.starts.pieces()) starts.write(piece);
      starts.write(bytesOf(Uint32Array.of(total)));
      starts.end();
    } finally {
      runs.keys.remove();
      runs.starts.remove();
    }
  }
}

/** An index of pieces all at hand, written as `corpus build` writes one. */
export function buildIndexFile(file: string, contents: { pieces: PieceInfo[]; notes: FlatNotes; files: FileFingerprint[]; percussion: boolean; shard?: ShardOf }): IndexBuilt {
  const builder = new IndexBuilder(file, { percussion: contents.percussion });
  try {
    builder.add(contents.pieces, contents.notes);
  } catch (e) {
    builder.abort();
    throw e;
  }
  return builder.finish({ files: contents.files, ...(contents.shard ? { shard: contents.shard } : {}) });
}

/** A section whose bytes are a spill file's. */
function copyInto(out: IndexWriter, tag: string, from: AppendFile): void {
  const s = out.section(tag, from.size);
  for (const piece of from.pieces()) s.write(piece);
  s.end();
}

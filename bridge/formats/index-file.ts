/**
 * The corpus index file (bridge/formats/index-file.md): a signature,
 * a version, a table of sections each with its own CRC-32, and the sections
 * themselves, 8-byte aligned, little-endian typed arrays read straight into
 * memory. A reader loads only the sections it needs (one pitch dimension's
 * postings, say), so loading costs what is read (load times:
 * test/bench/RESULTS.md).
 *
 * Anything that is not an index of this version, or that fails a check, is
 * an IndexFileError naming the file and saying how to rebuild it.
 *
 * @example
 *   writeIndexFile('songs/.earwitness-index', contents);
 *   const index = readIndexFile('songs/.earwitness-index', ['chromatic']);
 *   index.pieces[0]   // → { path: 'a.mid', title: 'A tune', beats: 64, key: {...} }
 */
import { closeSync, fstatSync, openSync, readSync, renameSync, rmSync } from 'node:fs';
import { basename, dirname } from 'node:path';
import { endianness } from 'node:os';
import { crc32 } from 'node:zlib';
import { z } from 'zod';
import { PITCH_MODES, type PitchMode } from '../../core/note.js';
import type { Piece } from '../../core/corpus.js';
import { type FlatNotes, notePoints } from '../../core/flat-notes.js';
import type { FlatPoints, RunReader, StoredPostings, TripleShape } from '../../core/triple-index.js';
import type { Baseline } from '../../core/report.js';
import { baselineSchema } from './baseline-file.js';
import { type SavedProblem, readSaved } from './saved.js';
import type { FingerprintShape, FingerprintTable, StoredFingerprints } from '../../core/fingerprint.js';
import { bytesOf, writeAll } from './spill.js';

/** 2: adds each pitch dimension's fingerprint table (tempo-free matching); a version 1 file is refused with a rebuild hint. */
export const INDEX_VERSION = 2;
/** Default file name inside the corpus folder. */
export const INDEX_NAME = '.earwitness-index';
/** A high byte, CR LF, ^Z, LF: a file passed through a text-mode or 7-bit channel no longer matches. */
const SIGNATURE = Uint8Array.from([0x89, 0x45, 0x57, 0x49, 0x0d, 0x0a, 0x1a, 0x0a]);
const HEADER_BYTES = 24;
const ENTRY_BYTES = 24;

export type PieceInfo = Omit<Piece, 'notes'>;

/** What `corpus build` remembers of each MIDI file (in META), to skip it next time when unchanged. */
const fileFingerprintSchema = z.object({
  /** Path relative to the corpus folder. */
  path: z.string().describe('a path inside the corpus folder'),
  size: z.number().int().min(0).describe('a size in bytes'),
  mtimeMs: z.number().describe('a modification time in ms'),
  /** SHA-256 of the content; null for a file too large to read. */
  sha256: z.string().nullable().describe('a SHA-256 in hex, or null'),
  /** Why the file is not in the index, or null when it is. */
  error: z.string().nullable().describe('the reason the file was skipped, or null'),
});
export type FileFingerprint = z.infer<typeof fileFingerprintSchema>;

/** A pitch dimension's postings: in memory, or (read with `onDemand`) their anchors read a key's run at a time. */
export type ModePostings = Pick<StoredPostings, 'keys' | 'starts' | 'anchors'>;

export interface IndexContents {
  shape: TripleShape;
  /** Whether channel 10 was kept: a rebuild with the other choice reads every file again. */
  percussion: boolean;
  pieces: PieceInfo[];
  files: FileFingerprint[];
  notes: FlatNotes;
  /**
   * Reading on demand a file that holds each piece's checksums: a pitch
   * dimension's points, read a piece at a time when first touched (FlatPoints
   * `ensure`), as `notes` are then. Absent otherwise: the points are made
   * from `notes` (core/flat-notes.ts notePoints).
   */
  points?: (mode: PitchMode) => FlatPoints;
  postings: Partial<Record<PitchMode, ModePostings>>;
  /** Which triples the fingerprint tables hold. */
  fingerprint: FingerprintShape;
  /** Writing: each pitch dimension's fingerprint table. Reading: each dimension's, read and checked when first called (`onDemand`: its anchors and codes a run at a time). */
  fingerprints: Partial<Record<PitchMode, FingerprintTable | (() => StoredFingerprints)>>;
  /** Human baselines stored by `corpus build --baseline` (optional section BASE; readIndexBaselines reads it). */
  baselines?: Baseline[];
  /** Which shard of which build this file is, for one of `corpus build --shards` (bridge/formats/shard-manifest.ts). */
  shard?: ShardOf;
}

/** What writeIndexFile takes: an index's contents, each pitch dimension's postings and fingerprint table as they are or made when their turn comes. */
export type IndexToWrite = Omit<IndexContents, 'postings' | 'fingerprints'> & {
  postings: Partial<Record<PitchMode, WhenWritten<ModePostings>>>;
  fingerprints: Partial<Record<PitchMode, WhenWritten<StoredFingerprints>>>;
};

/** One shard of a sharded build: a run of the corpus's pieces from `firstPiece` on. */
export interface ShardOf {
  build: string;
  /** The corpus's name, as the manifest gives it: what its queues are named after. */
  name: string;
  /** From 1. */
  number: number;
  of: number;
  firstPiece: number;
}

/** An index file that cannot be used: names the file, says what is wrong and how to rebuild it. */
export class IndexFileError extends Error {
  constructor(readonly file: string, readonly reason: string) {
    const folder = basename(file) === INDEX_NAME ? dirname(file) : 'CORPUS_FOLDER';
    super(`${file}: ${reason}; rebuild it with: earwitness corpus build ${folder}${folder === 'CORPUS_FOLDER' ? ` --out ${file}` : ''}`);
    this.name = 'IndexFileError';
  }
}

type Typed = Int32Array | Uint32Array | Uint8Array | Float64Array;
type TypedCtor = Int32ArrayConstructor | Uint32ArrayConstructor | Uint8ArrayConstructor | Float64ArrayConstructor;

export const NOTE_SECTIONS: [string, keyof FlatNotes, TypedCtor][] = [
  ['NOFS', 'offsets', Uint32Array],
  ['NATS', 'at', Int32Array],
  ['NDUR', 'duration', Int32Array],
  ['NPCH', 'pitch', Uint8Array],
  ['NMOR', 'morph', Uint8Array],
  ['NVEL', 'velocity', Uint8Array],
  ['NCHN', 'channel', Uint8Array],
];
/** The note sections a piece's notes are read from: all but the offsets. */
const NOTE_FIELDS = NOTE_SECTIONS.slice(1);
/** Per piece, the CRC-32 of its entries in each of NOTE_FIELDS, in order: what a piece read on its own is checked against. */
export const PIECE_CHECKS = 'NPCK';
/** After a pitch dimension's letter: its points' offsets, piece p's points being p's notes made into points (`notePoints`). */
export const POINT_OFFSETS = 'POF';
export const MODE_LETTER: Record<PitchMode, string> = { chromatic: 'C', morphetic: 'M' };
const POSTING_SECTIONS: [string, keyof ModePostings, TypedCtor][] = [
  ['KEY', 'keys', Float64Array],
  ['RUN', 'starts', Uint32Array],
  ['ANC', 'anchors', Uint32Array],
];
type FingerprintArrays = Omit<FingerprintTable, 'shape'>;
const FINGERPRINT_SECTIONS: [string, keyof FingerprintArrays, TypedCtor][] = [
  ['FKY', 'keys', Uint32Array],
  ['FRN', 'starts', Uint32Array],
  ['FAN', 'anchors', Uint32Array],
  ['FCD', 'codes', Uint8Array],
];

/** The META section's JSON: the schema writeIndexFile's Meta is typed by and readMeta checks. */
const metaSchema = z.object({
  shape: z.object({ partners: z.number().int().min(1).describe('a whole number ≥ 1'), horizonBeats: z.number().positive().describe('a positive number of beats') }),
  fingerprint: z.object({ fanOut: z.number().int().min(1).max(16).describe('a whole number from 1 to 16'), minGap: z.number().positive().describe('a positive number of beats') }),
  percussion: z.boolean().describe('true or false'),
  pieces: z.array(
    z.object({
      path: z.string().describe('a path inside the corpus folder'),
      title: z.string().nullable().describe('a title, or null'),
      beats: z.number().min(0).describe('a length in beats'),
      key: z.object({ tonic: z.string(), mode: z.enum(['major', 'minor']), fifths: z.number().int(), correlation: z.number() }),
      /** Time signatures; an index written without them reads as 4/4. */
      meter: z
        .array(z.object({ beat: z.number().min(0).describe('a beat ≥ 0'), numerator: z.number().int().min(1).describe('a whole number ≥ 1'), denominator: z.number().int().min(1).describe('a whole number ≥ 1') }))
        .optional(),
    }),
  ),
  files: z.array(fileFingerprintSchema),
  notes: z.number().int().min(0).describe('a whole number of notes'),
  modes: z.array(z.enum(PITCH_MODES as [PitchMode, ...PitchMode[]])).describe(`a list of ${PITCH_MODES.join(', ')}`),
  shard: z
    .object({
      build: z.string().describe('the build it belongs to'),
      name: z.string().describe("the corpus's name"),
      number: z.number().int().min(1).describe('a whole number ≥ 1'),
      of: z.number().int().min(1).describe('a whole number ≥ 1'),
      firstPiece: z.number().int().min(0).describe('a whole number ≥ 0'),
    })
    .optional(),
});
export type Meta = z.infer<typeof metaSchema>;

/** A JSON section's problem, as an IndexFileError: the section, the field, what was there and what was expected. */
const sectionProblem = (file: string, tag: string) => (p: SavedProblem) =>
  new IndexFileError(file, `damaged: the ${tag} section's field ${p.field}: got ${p.got}; expected ${p.expected}`);

/** A JSON section's text, parsed; text that is not JSON is an IndexFileError naming the section. */
function sectionJson(bytes: Uint8Array, file: string, tag: string): unknown {
  try {
    return JSON.parse(new TextDecoder().decode(bytes));
  } catch (e) {
    throw new IndexFileError(file, `damaged: the ${tag} section is not JSON (${(e as Error).message})`);
  }
}

function checkPlatform(): void {
  if (endianness() !== 'LE') throw new Error('index files are little-endian; this machine is big-endian, which earwitness does not support');
}

const align8 = (n: number): number => Math.ceil(n / 8) * 8;

/** A value given as is, or made when the writer reaches it (and let go once written). */
export type WhenWritten<T> = T | (() => T);
const made = <T extends object>(v: WhenWritten<T>): T => (typeof v === 'function' ? (v as () => T)() : v);

/** A section being written: its bytes in order, then `end`. */
export interface OpenSection {
  write(bytes: Uint8Array): void;
  end(): void;
}

/**
 * An index file being written, atomically: to a temporary file beside it,
 * renamed over the old one by `close`. Each section is given its length when
 * begun, so several can be written at once (a streaming build writes a pitch
 * dimension's anchors while its keys go to a spill); the section table, which
 * needs every section's CRC, offset and length, is written last, in the
 * space kept for it at the start.
 *
 * @example
 *   const out = new IndexWriter('songs/.earwitness-index', 2);
 *   out.whole('META', metaBytes);
 *   const anchors = out.section('CANC', 4 * n);
 *   anchors.write(firstRun); anchors.write(rest); anchors.end();
 *   out.close();
 */
export class IndexWriter {
  /** The file written until `close` renames it: where a section kept with `keep` is written by another thread. */
  readonly temp: string;
  private readonly fd: number;
  private readonly table: Buffer;
  private at: number;
  private begun = 0;
  private ended = 0;

  constructor(readonly file: string, readonly count: number) {
    checkPlatform();
    this.table = Buffer.alloc(HEADER_BYTES + ENTRY_BYTES * count);
    this.at = align8(this.table.length);
    this.temp = `${file}.${process.pid}.partial`;
    this.fd = openSync(this.temp, 'w');
  }

  section(tag: string, length: number): OpenSection {
    const { offset: start, end } = this.keep(tag, length);
    let position = start;
    let crc = 0;
    return {
      write: (bytes) => {
        if (position + bytes.length > start + length) throw new Error(`IndexWriter: section ${tag} given more than its ${length} bytes`);
        writeAll(this.fd, bytes, position);
        crc = crc32(bytes, crc);
        position += bytes.length;
      },
      end: () => {
        if (position !== start + length) throw new Error(`IndexWriter: section ${tag} ended at ${position - start} of its ${length} bytes`);
        end(crc);
      },
    };
  }

  /**
   * Keeps a section's place for bytes written elsewhere (another thread,
   * with a file handle of its own): `end` is given their CRC-32 once written.
   */
  keep(tag: string, length: number): { offset: number; end(crc: number): void } {
    if (this.begun === this.count) throw new Error(`IndexWriter: section ${tag} is one more than the ${this.count} the file was opened for`);
    const e = HEADER_BYTES + this.begun++ * ENTRY_BYTES;
    const offset = this.at;
    this.at = align8(offset + length);
    return { offset, end: (crc) => this.entry(e, tag, crc, offset, length) };
  }

  private entry(e: number, tag: string, crc: number, offset: number, length: number): void {
    this.table.write(tag, e, 'latin1');
    this.table.writeUInt32LE(crc, e + 4);
    this.table.writeBigUInt64LE(BigInt(offset), e + 8);
    this.table.writeBigUInt64LE(BigInt(length), e + 16);
    this.ended++;
  }

  /** A section whose bytes are all at hand. */
  whole(tag: string, bytes: Uint8Array): void {
    const s = this.section(tag, bytes.length);
    s.write(bytes);
    s.end();
  }

  /** Writes the section table and puts the file in place. */
  close(): void {
    if (this.ended !== this.count) throw new Error(`IndexWriter: ${this.ended} sections written, expected ${this.count}`);
    this.table.set(SIGNATURE, 0);
    this.table.writeUInt32LE(INDEX_VERSION, 8);
    this.table.writeUInt32LE(this.count, 12);
    this.table.writeUInt32LE(crc32(this.table.subarray(HEADER_BYTES)), 16);
    writeAll(this.fd, this.table, 0);
    closeSync(this.fd);
    renameSync(this.temp, this.file);
  }

  /** Leaves no trace of the file (a failed build never leaves a half-written index). */
  abort(): void {
    try {
      closeSync(this.fd);
    } catch {
      // Already closed.
    }
    rmSync(this.temp, { force: true });
  }
}

/** Sections an index holds besides its pitch dimensions': META, the notes and their per-piece checksums. */
export const NOTE_SECTION_COUNT = 1 + NOTE_SECTIONS.length + 1;
/** Sections each pitch dimension adds: postings, fingerprint table and point offsets. */
export const MODE_SECTION_COUNT = POSTING_SECTIONS.length + FINGERPRINT_SECTIONS.length + 1;

/**
 * The PIECE_CHECKS section of some pieces' notes: per piece, the CRC-32 of
 * its entries in each note section.
 *
 * @example
 *   pieceChecks(flattenNotes(pieces))   // → Uint32Array of pieces × 6 checksums
 */
export function pieceChecks(notes: FlatNotes): Uint32Array {
  const pieces = notes.offsets.length - 1;
  const out = new Uint32Array(pieces * NOTE_FIELDS.length);
  for (let p = 0; p < pieces; p++) {
    NOTE_FIELDS.forEach(([, field], f) => {
      out[p * NOTE_FIELDS.length + f] = crc32(bytesOf((notes[field] as Typed).subarray(notes.offsets[p], notes.offsets[p + 1])));
    });
  }
  return out;
}

/** The META JSON of an index's contents. */
export const metaBytes = (contents: Omit<IndexContents, 'notes' | 'postings' | 'fingerprints'>, notes: number, modes: PitchMode[]): Uint8Array => {
  const meta: Meta = { shape: contents.shape, fingerprint: contents.fingerprint, percussion: contents.percussion, pieces: contents.pieces, files: contents.files, notes, modes, ...(contents.shard ? { shard: contents.shard } : {}) };
  return new TextEncoder().encode(JSON.stringify(meta));
};

/** The BASE section's bytes. */
const baseBytes = (baselines: Baseline[]): Uint8Array => new TextEncoder().encode(JSON.stringify({ version: BASELINE_VERSION, baselines }));

/**
 * Writes an index whose contents are in memory (a pitch dimension's postings
 * or fingerprint table given as a function is made when the writer reaches
 * it and let go once written, so a build holds one of them at a time).
 * `corpus build` streams instead (bridge/formats/index-build.ts).
 */
export function writeIndexFile(file: string, contents: IndexToWrite): void {
  const modes = (Object.keys(contents.postings) as PitchMode[]).filter((m) => contents.postings[m]);
  const inMemory = (stored: Typed | RunReader<Uint32Array | Uint8Array>, what: string): Typed => {
    if (typeof stored === 'function') throw new Error(`writeIndexFile: the ${what} were read on demand; read them whole to write them`);
    return stored;
  };
  const out = new IndexWriter(file, NOTE_SECTION_COUNT + modes.length * MODE_SECTION_COUNT + (contents.baselines?.length ? 1 : 0));
  try {
    out.whole('META', metaBytes(contents, contents.notes.at.length, modes));
    for (const [tag, field] of NOTE_SECTIONS) out.whole(tag, bytesOf(contents.notes[field] as Typed));
    out.whole(PIECE_CHECKS, bytesOf(pieceChecks(contents.notes)));
    for (const mode of modes) {
      out.whole(MODE_LETTER[mode] + POINT_OFFSETS, bytesOf(notePoints(contents.notes, mode).offsets));
      const postings = made(contents.postings[mode]!);
      for (const [tag, field] of POSTING_SECTIONS) out.whole(MODE_LETTER[mode] + tag, bytesOf(inMemory(postings[field], `${mode} postings`)));
    }
    for (const mode of modes) {
      const given = contents.fingerprints[mode];
      if (!given) throw new Error(`writeIndexFile: the ${mode} fingerprint table is missing`);
      const table = made(given);
      for (const [tag, field] of FINGERPRINT_SECTIONS) out.whole(MODE_LETTER[mode] + tag, bytesOf(inMemory(table[field], `${mode} fingerprints`)));
    }
    if (contents.baselines?.length) out.whole('BASE', baseBytes(contents.baselines));
    out.close();
  } catch (e) {
    out.abort();
    throw e;
  }
}

interface Opened {
  fd: number;
  /** The section table's bytes, to tell later whether the file is still the one read. */
  table: Buffer;
  sections: Map<string, { crc: number; offset: number; length: number }>;
}

function readExactly(fd: number, file: string, length: number, position: number, what: string): Uint8Array<ArrayBuffer> {
  const bytes = new Uint8Array(new ArrayBuffer(length));
  let done = 0;
  while (done < length) {
    const n = readSync(fd, bytes, done, length - done, position + done);
    if (n === 0) throw new IndexFileError(file, `truncated: ${what} runs past the end of the file`);
    done += n;
  }
  return bytes;
}

function openIndex(file: string): Opened {
  checkPlatform();
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch (e) {
    throw new IndexFileError(file, `cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  try {
    const size = fstatSync(fd).size;
    if (size < HEADER_BYTES) throw new IndexFileError(file, `truncated or not an index: ${size} bytes, shorter than the ${HEADER_BYTES}-byte header`);
    const head = Buffer.from(readExactly(fd, file, HEADER_BYTES, 0, 'the header'));
    if (!head.subarray(0, SIGNATURE.length).equals(SIGNATURE)) throw new IndexFileError(file, 'not an earwitness corpus index (it does not start with the index signature)');
    const version = head.readUInt32LE(8);
    if (version !== INDEX_VERSION) throw new IndexFileError(file, `index format version ${version}${version < INDEX_VERSION ? ', written by an older earwitness' : ''}; this earwitness reads version ${INDEX_VERSION}`);
    const count = head.readUInt32LE(12);
    if (HEADER_BYTES + count * ENTRY_BYTES > size) throw new IndexFileError(file, 'truncated: the section table runs past the end of the file');
    const table = Buffer.from(readExactly(fd, file, count * ENTRY_BYTES, HEADER_BYTES, 'the section table'));
    if (crc32(table) !== head.readUInt32LE(16)) throw new IndexFileError(file, 'damaged: the section table fails its checksum');
    const sections = new Map<string, { crc: number; offset: number; length: number }>();
    for (let i = 0; i < count; i++) {
      const e = i * ENTRY_BYTES;
      const entry = { crc: table.readUInt32LE(e + 4), offset: Number(table.readBigUInt64LE(e + 8)), length: Number(table.readBigUInt64LE(e + 16)) };
      const tag = table.toString('latin1', e, e + 4);
      if (entry.offset + entry.length > size) throw new IndexFileError(file, `truncated: section ${tag} runs past the end of the file (${size} bytes)`);
      sections.set(tag, entry);
    }
    return { fd, table, sections };
  } catch (e) {
    closeSync(fd);
    throw e;
  }
}

/** A section's table entry, when it is there and holds `count` elements. */
function entryOf(opened: Opened, file: string, tag: string, ctor: TypedCtor, count: number): { crc: number; offset: number; length: number } {
  const entry = opened.sections.get(tag);
  if (!entry) throw new IndexFileError(file, `damaged: section ${tag} is missing`);
  if (entry.length !== count * ctor.BYTES_PER_ELEMENT) throw new IndexFileError(file, `damaged: section ${tag} holds ${entry.length} bytes, expected ${count * ctor.BYTES_PER_ELEMENT}`);
  return entry;
}

function section<T extends Typed>(opened: Opened, file: string, tag: string, ctor: TypedCtor, count: number): T {
  const entry = entryOf(opened, file, tag, ctor, count);
  const bytes = readExactly(opened.fd, file, entry.length, entry.offset, `section ${tag}`);
  if (crc32(bytes) !== entry.crc) throw new IndexFileError(file, `damaged: section ${tag} fails its checksum`);
  return new ctor(bytes.buffer, 0, count) as T;
}

function readMeta(opened: Opened, file: string): Meta {
  const entry = opened.sections.get('META');
  if (!entry) throw new IndexFileError(file, 'damaged: the META section is missing');
  const bytes = section<Uint8Array>(opened, file, 'META', Uint8Array, entry.length);
  return readSaved(metaSchema, sectionJson(bytes, file, 'META'), sectionProblem(file, 'META'));
}

function withIndex<T>(file: string, read: (opened: Opened) => T): T {
  const opened = openIndex(file);
  try {
    return read(opened);
  } finally {
    closeSync(opened.fd);
  }
}

/**
 * The checksum of an index's section table, eight hex digits: it holds every
 * section's own CRC-32, so it tells one build of a file from another without
 * reading the sections.
 */
export const readIndexCrc = (file: string): string => withIndex(file, (o) => crc32(o.table).toString(16).padStart(8, '0'));

/** The pieces, shape and file fingerprints alone: cheap, for deciding whether an index is current. */
export const readIndexMeta = (file: string): Meta => withIndex(file, (o) => readMeta(o, file));

export interface ReadOptions {
  /**
   * For notes read whole (not `onDemand`, or a file without the pieces'
   * checksums): leave the note sections that the asked-for pitch dimensions' point sets
   * do not need (durations, velocities, channels, the other pitch) to be read
   * when first used, as an excerpt's notes are: matching needs only onsets and
   * one pitch, 5 of the 12 bytes a note takes. Their presence
   * and lengths are checked at once; their checksums when they are read, where
   * a damaged section, or a file replaced in the meantime, is an
   * IndexFileError. A rebuild reuses every note, so it reads them all at once.
   */
  deferNotes?: boolean;
  /**
   * Read the notes and points a piece at a time, the first time the piece is
   * touched (`ensure`; a file written before the pieces' checksums were
   * stored is read as `deferNotes` says), and the postings' anchors, and the
   * fingerprint tables' anchors and codes, a key's run at a time when
   * matching first votes from the key, not whole now: at a hundred million
   * notes they are gigabytes, of which a session touches a small part. The file stays open for the life of the
   * process, so a rebuild (written beside it and renamed over it) or a
   * deletion does not change what is read. Runs are not checked against
   * their section's CRC, which covers the whole section; a run naming a note
   * the index does not hold is refused as it is read (`runReader`), and every
   * candidate a posting proposes is verified against the checked notes, so a
   * damaged posting can cost a match but never invent one.
   */
  onDemand?: boolean;
}

/** The note fields the point sets of `modes` are made from. */
const pointFields = (modes: readonly PitchMode[]): (keyof FlatNotes)[] => ['offsets', 'at', ...modes.map((m): keyof FlatNotes => (m === 'chromatic' ? 'pitch' : 'morph'))];

/**
 * Reads one section of an index opened earlier, when first used: the file
 * must still have the section table it had then, so a file rebuilt in the
 * meantime is never mixed with the one already read.
 */
function laterSection<T extends Typed>(file: string, table: Buffer, tag: string, ctor: TypedCtor, count: number): T {
  return withIndex(file, (opened) => {
    if (!opened.table.equals(table)) throw new IndexFileError(file, `replaced since it was opened (its section table differs), so its ${tag} section no longer belongs with what was read; open it again`);
    return section<T>(opened, file, tag, ctor, count);
  });
}

/**
 * Entries [from, to) of a section, read through the open file when asked;
 * with `below`, an entry of that value or more (a note the index does not
 * hold) is an IndexFileError.
 */
function runReader<T extends Uint32Array | Uint8Array>(opened: Opened, file: string, tag: string, ctor: Uint32ArrayConstructor | Uint8ArrayConstructor, count: number, below = Infinity): RunReader<T> {
  const entry = entryOf(opened, file, tag, ctor, count);
  const size = ctor.BYTES_PER_ELEMENT;
  return (from, to) => {
    if (!(Number.isInteger(from) && Number.isInteger(to) && from >= 0 && from <= to && to <= count)) throw new RangeError(`entries ${from}…${to} of section ${tag} asked for; it holds ${count}`);
    const run = new ctor(readExactly(opened.fd, file, (to - from) * size, entry.offset + from * size, `section ${tag}`).buffer, 0, to - from) as T;
    for (let i = 0; i < run.length; i++) if (run[i] >= below) throw new IndexFileError(file, `damaged: entry ${from + i} of section ${tag} names note ${run[i]}, but the index holds ${below} notes`);
    return run;
  };
}

/** Sets `field` of `target` to be read by `read` on first use, then kept. */
function onFirstUse<T extends object>(target: T, field: keyof T, read: () => unknown): void {
  Object.defineProperty(target, field, {
    enumerable: true,
    configurable: true,
    get: () => {
      const value = read();
      Object.defineProperty(target, field, { value, enumerable: true, writable: true });
      return value;
    },
  });
}

/** Reads an index with the postings of the given pitch dimensions; every section read is checked (`deferNotes`, `onDemand`: see ReadOptions). */
export function readIndexFile(file: string, modes: readonly PitchMode[], options: ReadOptions = {}): IndexContents {
  const opened = openIndex(file);
  try {
    return readOpened(file, opened, modes, options);
  } finally {
    // An index read on demand keeps its file open for its runs.
    if (!options.onDemand) closeSync(opened.fd);
  }
}

function readOpened(file: string, opened: Opened, modes: readonly PitchMode[], options: ReadOptions): IndexContents {
  const meta = readMeta(opened, file);
  const pieces = meta.pieces.length;
  const offsets = section<Uint32Array>(opened, file, 'NOFS', Uint32Array, pieces + 1);
  if (offsets[pieces] !== meta.notes) throw new IndexFileError(file, `damaged: the piece offsets end at ${offsets[pieces]}, not at the ${meta.notes} notes the index holds`);
  const byPiece = options.onDemand && opened.sections.has(PIECE_CHECKS) && meta.modes.every((m) => opened.sections.has(MODE_LETTER[m] + POINT_OFFSETS));
  const { notes, points } = byPiece ? piecewise(opened, file, meta, offsets) : { notes: wholeNotes(opened, file, meta, offsets, modes, options), points: undefined };
  const postings: Partial<Record<PitchMode, ModePostings>> = {};
  for (const mode of modes) {
    if (!meta.modes.includes(mode)) throw new IndexFileError(file, `holds no ${mode} postings`);
    const tag = (t: string): string => MODE_LETTER[mode] + t;
    const entry = (t: string) => opened.sections.get(tag(t));
    const keys = entry('KEY')?.length ?? 0;
    const anchors = entry('ANC')?.length ?? 0;
    const starts = section<Uint32Array>(opened, file, tag('RUN'), Uint32Array, keys / 8 + 1);
    postings[mode] = {
      keys: section(opened, file, tag('KEY'), Float64Array, keys / 8),
      starts,
      anchors: options.onDemand ? runReader<Uint32Array>(opened, file, tag('ANC'), Uint32Array, anchors / 4, meta.notes) : section<Uint32Array>(opened, file, tag('ANC'), Uint32Array, anchors / 4),
    };
    if (starts[starts.length - 1] !== anchors / 4) throw new IndexFileError(file, `damaged: the ${mode} key runs end at ${starts[starts.length - 1]}, not at the ${anchors / 4} postings`);
  }
  const fingerprints: IndexContents['fingerprints'] = {};
  for (const mode of meta.modes) {
    // Present and of consistent lengths now; read, and checked, when tempo-free matching first asks.
    const length = (t: string): number => opened.sections.get(MODE_LETTER[mode] + t)?.length ?? -1;
    const keys = length('FKY') / 4;
    const triples = length('FAN') / 4;
    if (!(keys >= 0 && triples >= 0)) throw new IndexFileError(file, `damaged: the ${mode} fingerprint sections are missing`);
    const counts: Record<keyof FingerprintArrays, number> = { keys, starts: keys + 1, anchors: triples, codes: triples };
    for (const [tag, field, ctor] of FINGERPRINT_SECTIONS) entryOf(opened, file, MODE_LETTER[mode] + tag, ctor, counts[field]);
    fingerprints[mode] = () => {
      const table = { shape: meta.fingerprint } as StoredFingerprints;
      for (const [tag, field, ctor] of FINGERPRINT_SECTIONS) {
        const t = MODE_LETTER[mode] + tag;
        const value = !options.onDemand ? laterSection(file, opened.table, t, ctor, counts[field])
          : field === 'anchors' || field === 'codes' ? runReader(opened, file, t, ctor as Uint32ArrayConstructor | Uint8ArrayConstructor, counts[field], field === 'anchors' ? meta.notes : Infinity)
          : section(opened, file, t, ctor, counts[field]);
        (table as unknown as Record<string, unknown>)[field] = value;
      }
      if (table.starts[keys] !== triples) throw new IndexFileError(file, `damaged: the ${mode} fingerprint runs end at ${table.starts[keys]}, not at the ${triples} triples`);
      return table;
    };
  }
  return { shape: meta.shape, fingerprint: meta.fingerprint, percussion: meta.percussion, pieces: meta.pieces, files: meta.files, notes, ...(points ? { points } : {}), postings, fingerprints, ...(meta.shard ? { shard: meta.shard } : {}) };
}

/** The note sections read whole: now, or (`deferNotes`) those the point sets of `modes` do not need when first used. */
function wholeNotes(opened: Opened, file: string, meta: Meta, offsets: Uint32Array, modes: readonly PitchMode[], options: ReadOptions): FlatNotes {
  const notes = { offsets } as FlatNotes;
  const now = pointFields(modes);
  for (const [tag, field, ctor] of NOTE_FIELDS) {
    if (!options.deferNotes || now.includes(field)) (notes as unknown as Record<string, Typed>)[field] = section(opened, file, tag, ctor, meta.notes);
    else {
      entryOf(opened, file, tag, ctor, meta.notes);
      onFirstUse(notes, field, () => laterSection(file, opened.table, tag, ctor, meta.notes));
    }
  }
  return notes;
}

/**
 * The notes, and each pitch dimension's points, read a piece at a time
 * through the open file the first time the piece is touched (their
 * `ensure`), each piece's entries checked against its checksums in
 * PIECE_CHECKS: opening reads nothing per note. The arrays are made whole
 * and empty when first asked for; memory is taken only where pieces are
 * written in.
 */
function piecewise(opened: Opened, file: string, meta: Meta, offsets: Uint32Array): { notes: FlatNotes; points: (mode: PitchMode) => FlatPoints } {
  const pieces = meta.pieces.length;
  const checks = section<Uint32Array>(opened, file, PIECE_CHECKS, Uint32Array, pieces * NOTE_FIELDS.length);
  const entries = NOTE_FIELDS.map(([tag, , ctor]) => entryOf(opened, file, tag, ctor, meta.notes));
  /** Piece p's entries of note field f, read and checked. */
  const slice = (f: number, p: number): Typed => {
    const [tag, , ctor] = NOTE_FIELDS[f];
    const size = ctor.BYTES_PER_ELEMENT;
    const bytes = readExactly(opened.fd, file, (offsets[p + 1] - offsets[p]) * size, entries[f].offset + offsets[p] * size, `section ${tag}`);
    if (crc32(bytes) !== checks[p * NOTE_FIELDS.length + f]) throw new IndexFileError(file, `damaged: piece ${p + 1}'s entries of section ${tag} fail their checksum`);
    return new ctor(bytes.buffer, 0, offsets[p + 1] - offsets[p]);
  };
  const fieldOf = (name: keyof FlatNotes): number => NOTE_FIELDS.findIndex(([, field]) => field === name);
  const notes = { offsets } as FlatNotes;
  // Made when a piece's notes are first asked for (an excerpt): matching reads points, not notes.
  for (const [, field, ctor] of NOTE_FIELDS) onFirstUse(notes, field, () => new ctor(meta.notes));
  const notesRead = new Uint8Array(pieces);
  notes.ensure = (p) => {
    if (notesRead[p]) return;
    NOTE_FIELDS.forEach(([, field], f) => (notes[field] as Typed).set(slice(f, p), offsets[p]));
    notesRead[p] = 1;
  };
  const points = (mode: PitchMode): FlatPoints => {
    const starts = section<Uint32Array>(opened, file, MODE_LETTER[mode] + POINT_OFFSETS, Uint32Array, pieces + 1);
    if (starts[0] !== 0) throw new IndexFileError(file, `damaged: the ${mode} point offsets start at ${starts[0]}, not 0`);
    for (let p = 0; p < pieces; p++) {
      if (starts[p] > starts[p + 1] || starts[p + 1] - starts[p] > offsets[p + 1] - offsets[p]) throw new IndexFileError(file, `damaged: the ${mode} point offsets of piece ${p + 1} do not fit its notes`);
    }
    const [atField, pitchField] = [fieldOf('at'), fieldOf(mode === 'chromatic' ? 'pitch' : 'morph')];
    const flat: FlatPoints = { mode, offsets: starts, at: new Int32Array(starts[pieces]), pitch: new Uint8Array(starts[pieces]) };
    const read = new Uint8Array(pieces);
    flat.ensure = (p) => {
      if (read[p]) return;
      const source = slice(pitchField, p) as Uint8Array;
      const one = notePoints({ offsets: Uint32Array.of(0, source.length), at: slice(atField, p) as Int32Array, pitch: source, morph: source } as FlatNotes, mode);
      if (one.at.length !== starts[p + 1] - starts[p]) throw new IndexFileError(file, `damaged: piece ${p + 1} makes ${one.at.length} ${mode} points, its point offsets say ${starts[p + 1] - starts[p]}`);
      flat.at.set(one.at, starts[p]);
      flat.pitch.set(one.pitch, starts[p]);
      read[p] = 1;
    };
    return flat;
  };
  const byMode = new Map<PitchMode, FlatPoints>();
  return { notes, points: (mode) => byMode.get(mode) ?? byMode.set(mode, points(mode)).get(mode)! };
}

/** Version of the optional BASE section's JSON, apart from the index's: a reader of the postings need not understand it. */
export const BASELINE_VERSION = 1;

/** The BASE section's JSON: its version and the baselines, each as a baseline file holds one. */
const baseSchema = z.object({ version: z.literal(BASELINE_VERSION), baselines: z.array(baselineSchema).describe('a list of baselines') });

/**
 * The human baselines an index holds (empty when it was built without
 * --baseline). The section is checked like any other; a damaged or newer
 * one is an IndexFileError naming it.
 */
export function readIndexBaselines(file: string): Baseline[] {
  return withIndex(file, (opened) => {
    const entry = opened.sections.get('BASE');
    if (!entry) return [];
    const json = sectionJson(section<Uint8Array>(opened, file, 'BASE', Uint8Array, entry.length), file, 'BASE');
    const version = (json as { version?: unknown } | null)?.version;
    if (version !== BASELINE_VERSION) throw new IndexFileError(file, `baseline section version ${String(version)}; this earwitness reads version ${BASELINE_VERSION}`);
    return readSaved(baseSchema, json, sectionProblem(file, 'BASE')).baselines;
  });
}

/**
 * Temporary files for a build larger than memory: `AppendFile`, typed arrays
 * appended and read back by `filePieces`, and `BucketSpill`, records (core/keyed-sort.ts)
 * cut into 256 buckets by the top 8 bits of their key and handed back
 * bucket by bucket in key order, each sorted. A bucket larger than the
 * sorting limit is cut again on the next 8 bits in a spill of its own, and a
 * bucket whose whole key is decided (every record has the same key) is
 * handed back a chunk at a time as it was written, which is already its
 * order: so memory stays within the limit however the keys are spread.
 *
 * @example
 *   const spill = new BucketSpill('/tmp/x.spill', { halves: 1, fields: ['u32'] });
 *   spill.add({ hi: Uint32Array.of(9, 2), lo: null, fields: [Uint32Array.of(1, 2)] });
 *   for (const part of spill.sorted(1_000_000)) part.hi   // → [2, 9]
 *   spill.remove();
 */
import { closeSync, fstatSync, openSync, readSync, rmSync, writeSync } from 'node:fs';
import { type Field, type KeyedRecords, HALF_BITS, sortRecords } from '../../core/keyed-sort.js';

const DIGIT_BITS = 8;
const BUCKETS = 1 << DIGIT_BITS;
/** Records a bucket's buffer holds before it is written out, at most. */
const CHUNK = 4096;

/** Writes all of `bytes` at `position` (a write may take less than asked). */
export function writeAll(fd: number, bytes: Uint8Array, position: number): void {
  for (let done = 0; done < bytes.length; ) done += writeSync(fd, bytes, done, bytes.length - done, position + done);
}

/** Reads exactly `into.length` bytes at `position`; fewer is an Error naming the file. */
export function readAll(fd: number, into: Uint8Array, position: number, file: string): void {
  for (let done = 0; done < into.length; ) {
    const n = readSync(fd, into, done, into.length - done, position + done);
    if (n === 0) throw new Error(`${file}: ended ${into.length - done} bytes early at byte ${position + done}`);
    done += n;
  }
}

/** A typed array's bytes, as a view. */
export const bytesOf = (a: ArrayBufferView): Uint8Array => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);

/** A temporary file typed arrays are appended to; closed, it is read back with `filePieces`. */
export class AppendFile {
  private fd: number | null;
  size = 0;

  constructor(readonly path: string) {
    this.fd = openSync(path, 'w');
  }

  append(a: ArrayBufferView): void {
    if (this.fd === null) throw new Error(`${this.path}: appended to after it was closed`);
    writeAll(this.fd, bytesOf(a), this.size);
    this.size += a.byteLength;
  }

  close(): void {
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
  }
}

/** A file's bytes in order, `pieceBytes` at a time (a view, good until the next one). */
export function* filePieces(path: string, pieceBytes = 8 * 2 ** 20): Generator<Uint8Array> {
  const fd = openSync(path, 'r');
  try {
    const size = fstatSync(fd).size;
    const buffer = new Uint8Array(Math.min(pieceBytes, Math.max(1, size)));
    for (let at = 0; at < size; at += buffer.length) {
      const piece = buffer.subarray(0, Math.min(buffer.length, size - at));
      readAll(fd, piece, at, path);
      yield piece;
    }
  } finally {
    closeSync(fd);
  }
}

/** What a spill's records hold: a key of one or two halves, and fields of 4 bytes or 1. */
export interface RecordLayout {
  halves: 1 | 2;
  fields: ('u32' | 'u8')[];
}

/** Bytes a record of this layout takes. */
export const recordBytes = (layout: RecordLayout): number => 4 * layout.halves + layout.fields.reduce((s, f) => s + (f === 'u32' ? 4 : 1), 0);

const arraysOf = (layout: RecordLayout, n: number): KeyedRecords => ({
  hi: new Uint32Array(n),
  lo: layout.halves === 2 ? new Uint32Array(n) : null,
  fields: layout.fields.map((f) => (f === 'u32' ? new Uint32Array(n) : new Uint8Array(n))),
});

const columns = (r: KeyedRecords): Field[] => [r.hi, ...(r.lo ? [r.lo] : []), ...r.fields];

/** A spill closed for writing (`BucketSpill.close`), to be read in another thread (`BucketSpill.reopened`). */
export interface SpillState {
  path: string;
  layout: RecordLayout;
  level: number;
  /** Per bucket, its chunks as [offset, records, offset, records, …]. */
  chunks: number[][];
  counts: number[];
  count: number;
}

/** Records cut into buckets by 8 bits of their key, from the top down (`level` 0 is the top 8 bits). */
export class BucketSpill {
  private fd: number | null = null;
  private end = 0;
  private chunks: { offset: number; n: number }[][] = Array.from({ length: BUCKETS }, () => []);
  private buffer: KeyedRecords | null;
  private readonly fill = new Uint32Array(BUCKETS);
  /** Records per bucket, and in all. */
  readonly counts = new Float64Array(BUCKETS);
  count = 0;
  private readonly digitOf: (hi: number, lo: number) => number;

  /** Records a bucket's buffer holds: fewer than CHUNK for a spill known to take few records. */
  private readonly chunk: number;

  /** `expected`: how many records will come, when known (a bucket cut again), so a small spill keeps small buffers. */
  constructor(readonly path: string, readonly layout: RecordLayout, readonly level = 0, expected = Infinity) {
    const levels = (layout.halves * HALF_BITS) / DIGIT_BITS;
    if (!(level >= 0 && level < levels)) throw new RangeError(`a ${layout.halves}-half key has ${levels} levels of ${DIGIT_BITS} bits; level ${level} asked for`);
    const perHalf = HALF_BITS / DIGIT_BITS;
    const shift = HALF_BITS - DIGIT_BITS * ((level % perHalf) + 1);
    this.digitOf = layout.halves === 2 && level >= perHalf ? (_hi, lo) => (lo >>> shift) & (BUCKETS - 1) : (hi) => (hi >>> shift) & (BUCKETS - 1);
    this.chunk = Math.min(CHUNK, Math.max(16, expected));
    this.buffer = arraysOf(layout, BUCKETS * this.chunk);
  }

  /** Appends records, each to its bucket, keeping their order within a bucket. */
  add(records: KeyedRecords): void {
    const buffer = this.buffer;
    if (!buffer) throw new Error(`${this.path}: records added after the spill was read`);
    const from = columns(records);
    const to = columns(buffer);
    const { hi } = records;
    const lo = records.lo ?? hi;
    for (let i = 0; i < hi.length; i++) {
      const b = this.digitOf(hi[i], lo[i]);
      const at = b * this.chunk + this.fill[b]++;
      for (let c = 0; c < to.length; c++) to[c][at] = from[c][i];
      this.counts[b]++;
      if (this.fill[b] === this.chunk) this.flush(b);
    }
    this.count += hi.length;
  }

  private flush(b: number): void {
    const n = this.fill[b];
    if (n === 0) return;
    this.fd ??= openSync(this.path, 'w+');
    this.chunks[b].push({ offset: this.end, n });
    for (const column of columns(this.buffer!)) {
      const part = bytesOf(column.subarray(b * this.chunk, b * this.chunk + n));
      writeAll(this.fd, part, this.end);
      this.end += part.length;
    }
    this.fill[b] = 0;
  }

  /** Writes out what is buffered and closes the file: the spill, as another thread reopens it. */
  close(): SpillState {
    if (this.buffer) for (let b = 0; b < BUCKETS; b++) this.flush(b);
    this.buffer = null;
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
    return { path: this.path, layout: this.layout, level: this.level, chunks: this.chunks.map((cs) => cs.flatMap((c) => [c.offset, c.n])), counts: [...this.counts], count: this.count };
  }

  /** A closed spill, ready to be read. */
  static reopened(state: SpillState): BucketSpill {
    const spill = new BucketSpill(state.path, state.layout, state.level, 0);
    spill.buffer = null;
    spill.chunks = state.chunks.map((flat) => Array.from({ length: flat.length / 2 }, (_, i) => ({ offset: flat[2 * i], n: flat[2 * i + 1] })));
    spill.counts.set(state.counts);
    spill.count = state.count;
    if (state.count > 0) spill.fd = openSync(state.path, 'r');
    return spill;
  }

  /** One chunk of a bucket, read back. */
  private readChunk(chunk: { offset: number; n: number }, into: KeyedRecords, at: number): void {
    let offset = chunk.offset;
    for (const column of columns(into)) {
      const part = bytesOf(column.subarray(at, at + chunk.n));
      readAll(this.fd!, part, offset, this.path);
      offset += part.length;
    }
  }

  /**
   * The records in key order, a bucket (or a chunk of one key) at a time,
   * never more than `limit` records sorted at once. Once read, the spill takes
   * no more records; `remove` deletes its file.
   */
  *sorted(limit: number): Generator<KeyedRecords> {
    if (this.buffer) for (let b = 0; b < BUCKETS; b++) this.flush(b);
    this.buffer = null;
    const levels = (this.layout.halves * HALF_BITS) / DIGIT_BITS;
    for (let b = 0; b < BUCKETS; b++) {
      const n = this.counts[b];
      if (n === 0) continue;
      if (n <= limit) {
        const bucket = arraysOf(this.layout, n);
        let at = 0;
        for (const chunk of this.chunks[b]) {
          this.readChunk(chunk, bucket, at);
          at += chunk.n;
        }
        yield sortRecords(bucket);
      } else if (this.level + 1 < levels) {
        const finer = new BucketSpill(`${this.path}.${b}`, this.layout, this.level + 1, n);
        try {
          for (const chunk of this.chunks[b]) {
            const part = arraysOf(this.layout, chunk.n);
            this.readChunk(chunk, part, 0);
            finer.add(part);
          }
          yield* finer.sorted(limit);
        } finally {
          finer.remove();
        }
      } else {
        // Every record here has the same key, and they lie in the order they came.
        for (const chunk of this.chunks[b]) {
          const part = arraysOf(this.layout, chunk.n);
          this.readChunk(chunk, part, 0);
          yield part;
        }
      }
    }
  }

  remove(): void {
    if (this.fd !== null) closeSync(this.fd);
    this.fd = null;
    rmSync(this.path, { force: true });
  }
}

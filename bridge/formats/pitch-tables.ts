/**
 * Writing one pitch dimension's tables of a streaming build
 * (bridge/formats/index-build.ts) from its spills: the triples and the
 * fingerprint triples, bucket by bucket in key order, each bucket sorted
 * within a memory limit. The anchors and codes go straight into the index
 * file, at the places its writer kept for them (through a file handle of
 * their own, so that each dimension can be written in a thread of its own,
 * bridge/formats/pitch-tables-worker.ts); the keys and run starts, whose
 * count is known only at the end, to files the writer copies in after.
 *
 * @example
 *   writeTables({ dir, mode: 'chromatic', triples, fingerprints, sortBytes: 2 ** 30, place }, (records) => {})
 *   // → { crcs: { anchors: …, fingerprintAnchors: …, codes: … }, keys: '/…/chromatic-keys', … }
 */
import { closeSync, openSync } from 'node:fs';
import { join } from 'node:path';
import { crc32 } from 'node:zlib';
import type { PitchMode } from '../../core/note.js';
import { keyOfHalves } from '../../core/triple-index.js';
import { type KeyedRecords, keyDiffers } from '../../core/keyed-sort.js';
import { AppendFile, BucketSpill, type SpillState, bytesOf, recordBytes, writeAll } from './spill.js';

/** One dimension's tables to write. */
export interface TablesJob {
  /** Where the key and run files go. */
  dir: string;
  mode: PitchMode;
  triples: SpillState;
  fingerprints: SpillState;
  /** Memory one bucket may take while it is sorted, bytes. */
  sortBytes: number;
  /** The index file being written, and the byte offsets kept for the sections of known length. */
  place: { file: string; anchors: number; fingerprintAnchors: number; codes: number };
}

/** The CRC-32s of what was written at those places, and the files holding the keys and run starts (the last start being the total). */
export interface TablesWritten {
  crcs: { anchors: number; fingerprintAnchors: number; codes: number };
  keys: string;
  starts: string;
  fingerprintKeys: string;
  fingerprintStarts: string;
}

/** Bytes written in order from `position` on, with their CRC-32. */
class Placed {
  crc = 0;
  constructor(private readonly fd: number, private position: number) {}
  write(bytes: Uint8Array): void {
    writeAll(this.fd, bytes, this.position);
    this.position += bytes.length;
    this.crc = crc32(bytes, this.crc);
  }
}

/** Writes a dimension's tables; `wrote` is told the records of each sorted part as it is written. */
export function writeTables(job: TablesJob, wrote: (records: number) => void): TablesWritten {
  const fd = openSync(job.place.file, 'r+');
  try {
    const anchors = new Placed(fd, job.place.anchors);
    const triples = keyRuns(job, job.triples, 'keys', Float64Array, (sorted, i) => keyOfHalves(sorted.hi[i], sorted.lo![i]), (sorted) => {
      anchors.write(bytesOf(sorted.fields[0]));
      wrote(sorted.hi.length);
    });
    const [fingerprintAnchors, codes] = [new Placed(fd, job.place.fingerprintAnchors), new Placed(fd, job.place.codes)];
    const fingerprints = keyRuns(job, job.fingerprints, 'fingerprint-keys', Uint32Array, (sorted, i) => sorted.hi[i], (sorted) => {
      fingerprintAnchors.write(bytesOf(sorted.fields[0]));
      codes.write(bytesOf(sorted.fields[1]));
      wrote(sorted.hi.length);
    });
    return { crcs: { anchors: anchors.crc, fingerprintAnchors: fingerprintAnchors.crc, codes: codes.crc }, keys: triples.keys, starts: triples.starts, fingerprintKeys: fingerprints.keys, fingerprintStarts: fingerprints.starts };
  } finally {
    closeSync(fd);
  }
}

/**
 * Reads a spill in key order, handing each sorted part to `write`, and
 * appends each distinct key, and where its run starts, to files of their
 * own; the starts end with the total.
 */
function keyRuns(
  job: TablesJob,
  state: SpillState,
  name: string,
  keyType: Float64ArrayConstructor | Uint32ArrayConstructor,
  keyAt: (sorted: KeyedRecords, i: number) => number,
  write: (sorted: KeyedRecords) => void,
): { keys: string; starts: string } {
  const spill = BucketSpill.reopened(state);
  const keys = new AppendFile(join(job.dir, `${job.mode}-${name}`));
  const starts = new AppendFile(join(job.dir, `${job.mode}-${name}-starts`));
  try {
    let before = 0;
    let last: KeyedRecords | null = null;
    // Sorting takes the bucket, a copy of it, and each record's place.
    for (const sorted of spill.sorted(Math.max(1, Math.floor(job.sortBytes / (2 * recordBytes(state.layout) + 4))))) {
      const n = sorted.hi.length;
      const firsts: number[] = [];
      // A key's run may go on from the part before (one key's records handed over in chunks).
      for (let i = 0; i < n; i++) {
        const fresh = i > 0 ? keyDiffers(sorted, i, i - 1) : last === null || keyAt(sorted, 0) !== keyAt(last, 0);
        if (fresh) firsts.push(i);
      }
      keys.append(keyType.from(firsts.map((i) => keyAt(sorted, i))));
      starts.append(Uint32Array.from(firsts, (i) => before + i));
      write(sorted);
      before += n;
      // The last key alone, copied: the part itself is let go.
      if (n > 0) last = { hi: sorted.hi.slice(n - 1), lo: sorted.lo ? sorted.lo.slice(n - 1) : null, fields: [] };
    }
    starts.append(Uint32Array.of(before));
    return { keys: keys.path, starts: starts.path };
  } finally {
    keys.close();
    starts.close();
    spill.remove();
  }
}

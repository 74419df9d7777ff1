/**
 * Sorting an index's records by key, stably, with no object per record: the
 * triple postings (core/triple-index.ts) and the fingerprint table
 * (core/fingerprint.ts) are both records of a key and what it points at,
 * stored in key order with each key's records in the order they were made.
 *
 * A key is one or two halves of at most 24 bits each (hi first); a record's
 * other fields ride along. Sorting is least significant digit first, 12 bits
 * a pass, skipping a pass whose digit is the same in every record: after a
 * streaming build has cut its records into buckets by the key's top bits
 * (bridge/formats/index-build.ts), those digits cost nothing.
 *
 * @example
 *   const sorted = sortRecords({ hi: Uint32Array.of(7, 3, 7), lo: null, fields: [Uint32Array.of(10, 11, 12)] });
 *   sorted.hi          // → [3, 7, 7]
 *   sorted.fields[0]   // → [11, 10, 12]
 *   runStarts(sorted)  // → [0, 1]: key 3 from record 0, key 7 from record 1
 */

/** A key's halves hold at most this many bits. */
export const HALF_BITS = 24;

export type Field = Uint32Array | Uint8Array;

export interface KeyedRecords {
  /** The key's high half, or the whole key when `lo` is null. */
  hi: Uint32Array;
  lo: Uint32Array | null;
  /** The fields carried along, each as long as `hi`. */
  fields: Field[];
}

const DIGIT_BITS = 12;
const BINS = 1 << DIGIT_BITS;

/** to[dest[i]] = from[i] for every i: one array's part of a pass, in a loop of its own so each sees one kind of array. */
function scatter(from: Field, to: Field, dest: Uint32Array): void {
  for (let i = 0; i < dest.length; i++) to[dest[i]] = from[i];
}

/**
 * The records sorted by key, stable. A pass finds each record's place from
 * one digit, then moves the key and every field there, array by array: four
 * passes at most for two halves, two for one. The given arrays serve as
 * scratch.
 */
export function sortRecords(records: KeyedRecords): KeyedRecords {
  const n = records.hi.length;
  let arrays: Field[] = [records.hi, ...(records.lo ? [records.lo] : []), ...records.fields];
  let spare: Field[] | null = null;
  const dest = new Uint32Array(n);
  const counts = new Uint32Array(BINS + 1);
  for (const half of records.lo ? [1, 0] : [0]) {
    for (let shift = 0; shift < HALF_BITS; shift += DIGIT_BITS) {
      const digits = arrays[half] as Uint32Array;
      counts.fill(0);
      for (let i = 0; i < n; i++) counts[((digits[i] >>> shift) & (BINS - 1)) + 1]++;
      // A digit every record shares sorts nothing.
      if (n === 0 || counts[((digits[0] >>> shift) & (BINS - 1)) + 1] === n) continue;
      for (let d = 0; d < BINS; d++) counts[d + 1] += counts[d];
      for (let i = 0; i < n; i++) dest[i] = counts[(digits[i] >>> shift) & (BINS - 1)]++;
      spare ??= arrays.map((a) => new (a.constructor as new (n: number) => Field)(n));
      for (let a = 0; a < arrays.length; a++) scatter(arrays[a], spare[a], dest);
      [arrays, spare] = [spare, arrays];
    }
  }
  const lo = records.lo ? (arrays[1] as Uint32Array) : null;
  return { hi: arrays[0] as Uint32Array, lo, fields: arrays.slice(lo ? 2 : 1) };
}

/** True when record i's key differs from record j's. */
export const keyDiffers = (r: Pick<KeyedRecords, 'hi' | 'lo'>, i: number, j: number): boolean => r.hi[i] !== r.hi[j] || (r.lo !== null && r.lo[i] !== r.lo[j]);

/** Where each distinct key's run begins in sorted records. */
export function runStarts(sorted: Pick<KeyedRecords, 'hi' | 'lo'>): Uint32Array {
  const n = sorted.hi.length;
  let distinct = 0;
  for (let i = 0; i < n; i++) if (i === 0 || keyDiffers(sorted, i, i - 1)) distinct++;
  const starts = new Uint32Array(distinct);
  for (let i = 0, d = 0; i < n; i++) if (i === 0 || keyDiffers(sorted, i, i - 1)) starts[d++] = i;
  return starts;
}

/**
 * Vote counts per (piece, time shift, pitch shift): an open-addressing hash
 * table in typed arrays, so counting thousands of votes a window allocates
 * nothing. A key is two int32s: the time shift in grains, and the piece
 * (22 bits, four million pieces) with the pitch shift (9 bits). Entries sit
 * in arrays of their own in the order they were first voted for, so finding
 * the most-voted reads them front to back instead of hopping over the whole
 * table. Counts go down as well as up (a streaming window takes back the
 * votes of notes it forgets); entries at zero are dropped when the entry
 * arrays fill.
 *
 * @example
 *   const votes = new VoteTable();
 *   votes.add(3, -7680, 5, 1); votes.add(3, -7680, 5, 1);
 *   const [e] = votes.top(1);
 *   [votes.pieceAt(e), votes.shiftAt(e), votes.dpAt(e), votes.countAt(e)]   // → [3, -7680, 5, 2]
 */

export class VoteTable {
  private bits: number;
  /**
   * Hash slots, four int32s each: the key's two halves, the entry number + 1
   * (0 = empty), and a spare that keeps a slot inside one cache line. A probe
   * compares keys where it lands instead of hopping to an entry elsewhere.
   */
  private slots: Int32Array;
  /** Per entry, in the order first voted for: the votes, and its slot. */
  private count: Int32Array;
  private slot: Int32Array;
  private size = 0;

  constructor(bits = 12) {
    this.bits = bits;
    this.slots = new Int32Array(4 << bits);
    this.count = new Int32Array(1 << (bits - 1));
    this.slot = new Int32Array(1 << (bits - 1));
  }

  /** The slot (times 4) holding (low, high), or the empty slot where it would go. */
  private find(low: number, high: number): number {
    const mask = (4 << this.bits) - 4;
    const slots = this.slots;
    let s = (Math.imul(low ^ Math.imul(high, 0x85ebca6b), 0x9e3779b1) >>> (32 - this.bits)) << 2;
    while (slots[s + 2] !== 0 && (slots[s] !== low || slots[s + 1] !== high)) s = (s + 4) & mask;
    return s;
  }

  /** Adds `delta` votes for a piece, a time shift in whole grains (int32) and a pitch shift in −255…255. */
  add(piece: number, shift: number, dp: number, delta: number): void {
    const high = (piece << 9) | (dp + 256);
    let s = this.find(shift, high);
    if (this.slots[s + 2] === 0) {
      if (this.size === this.count.length) {
        this.compact();
        s = this.find(shift, high);
      }
      this.claim(s, shift, high, 0);
    }
    this.count[this.slots[s + 2] - 1] += delta;
  }

  /** Makes slot `s` a new entry for (low, high) with `votes`. */
  private claim(s: number, low: number, high: number, votes: number): void {
    const e = this.size++;
    this.slots[s] = low;
    this.slots[s + 1] = high;
    this.slots[s + 2] = e + 1;
    this.count[e] = votes;
    this.slot[e] = s;
  }

  /** Keeps the entries holding votes, in order, in a table with room for as many again. */
  private compact(): void {
    let live = 0;
    for (let e = 0; e < this.size; e++) if (this.count[e] > 0) live++;
    while (live * 4 > 1 << this.bits) this.bits++;
    const old = { slots: this.slots, slot: this.slot, count: this.count, size: this.size };
    const n = 1 << this.bits;
    this.slots = new Int32Array(4 * n);
    this.count = new Int32Array(n >> 1);
    this.slot = new Int32Array(n >> 1);
    this.size = 0;
    for (let e = 0; e < old.size; e++) {
      if (old.count[e] <= 0) continue;
      const low = old.slots[old.slot[e]];
      const high = old.slots[old.slot[e] + 1];
      this.claim(this.find(low, high), low, high, old.count[e]);
    }
  }

  /** Forgets every vote; costs the number of entries, not the table's size. */
  clear(): void {
    for (let e = 0; e < this.size; e++) this.slots[this.slot[e] + 2] = 0;
    this.size = 0;
  }

  /** The `n` most-voted entries with at least `atLeast` votes, most first; ties keep the order of first vote. */
  top(n: number, atLeast = 1): number[] {
    return mostCounted(this.count, this.size, n, atLeast);
  }

  pieceAt(entry: number): number {
    return this.slots[this.slot[entry] + 1] >>> 9;
  }

  shiftAt(entry: number): number {
    return this.slots[this.slot[entry]];
  }

  dpAt(entry: number): number {
    return (this.slots[this.slot[entry] + 1] & 511) - 256;
  }

  countAt(entry: number): number {
    return this.count[entry];
  }
}

/**
 * The `n` entries of `counts[0 … size)` with the highest counts (at least
 * `atLeast`), highest first, ties in entry order, without sorting them all.
 *
 * @example
 *   mostCounted(Int32Array.of(2, 7, 7, 1), 4, 2)   // → [1, 2]
 */
export function mostCounted(counts: ArrayLike<number>, size: number, n: number, atLeast = 1): number[] {
  const best: number[] = [];
  for (let e = 0; e < size; e++) {
    const c = counts[e];
    if (c < atLeast || (best.length === n && c <= counts[best[n - 1]])) continue;
    let i = best.length < n ? best.length : n - 1;
    while (i > 0 && counts[best[i - 1]] < c) {
      if (i < n) best[i] = best[i - 1];
      i--;
    }
    best[i] = e;
  }
  return best;
}

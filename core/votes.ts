/**
 * Vote counts per (piece, time shift, pitch shift): an open-addressing hash
 * table in typed arrays, so counting thousands of votes a window allocates
 * nothing. A key is two int32s: the time shift in grains, and the piece
 * (22 bits, four million pieces) with the pitch shift (9 bits). Entries sit
 * in arrays of their own in the order they were first voted for, so finding
 * the most-voted reads them front to back instead of hopping over the whole
 * table. Counts go down as well as up (a streaming window takes back the
 * votes of notes it forgets): an entry that falls to zero leaves its hash
 * slot at once (the probe run closed up behind it, so lookups stay short
 * however long a table streams) and leaves a hole in the entry arrays,
 * which are closed up in order, without rehashing, when they fill.
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
  /** Entries below `size` that have left (count 0, slot −1). */
  private holes = 0;

  constructor(bits = 12) {
    this.bits = bits;
    this.slots = new Int32Array(4 << bits);
    this.count = new Int32Array(1 << (bits - 1));
    this.slot = new Int32Array(1 << (bits - 1));
  }

  /** The home slot (times 4) of (low, high). */
  private home(low: number, high: number): number {
    return (Math.imul(low ^ Math.imul(high, 0x85ebca6b), 0x9e3779b1) >>> (32 - this.bits)) << 2;
  }

  /** The slot (times 4) holding (low, high), or the empty slot where it would go. */
  private find(low: number, high: number): number {
    const mask = (4 << this.bits) - 4;
    const slots = this.slots;
    let s = this.home(low, high);
    while (slots[s + 2] !== 0 && (slots[s] !== low || slots[s + 1] !== high)) s = (s + 4) & mask;
    return s;
  }

  /** Adds `delta` votes for a piece, a time shift in whole grains (int32) and a pitch shift in −255…255. */
  add(piece: number, shift: number, dp: number, delta: number): void {
    const high = (piece << 9) | (dp + 256);
    let s = this.find(shift, high);
    if (this.slots[s + 2] === 0) {
      if (this.size === this.count.length) {
        this.makeRoom();
        s = this.find(shift, high);
      }
      this.claim(s, shift, high, 0);
    }
    const e = this.slots[s + 2] - 1;
    if ((this.count[e] += delta) <= 0) this.remove(s, e);
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

  /** Takes entry `e`, in slot `s`, out: later slots of its probe run shift back (linear probing keeps no tombstones), and the entry becomes a hole. */
  private remove(s: number, e: number): void {
    const slots = this.slots;
    const mask = (4 << this.bits) - 4;
    let hole = s;
    for (let j = (s + 4) & mask; slots[j + 2] !== 0; j = (j + 4) & mask) {
      const home = this.home(slots[j], slots[j + 1]);
      // The entry at j may fill the hole unless its home lies cyclically in (hole, j].
      const stays = hole <= j ? home > hole && home <= j : home > hole || home <= j;
      if (stays) continue;
      slots[hole] = slots[j];
      slots[hole + 1] = slots[j + 1];
      slots[hole + 2] = slots[j + 2];
      this.slot[slots[hole + 2] - 1] = hole;
      hole = j;
    }
    slots[hole + 2] = 0;
    this.count[e] = 0;
    this.slot[e] = -1;
    // Finding the most-voted reads every entry, holes too: once they are half, they go.
    if (++this.holes * 2 > this.size) this.closeHoles();
  }

  /** The entry arrays are full: closes up their holes, and doubles the table if that leaves it over half full. */
  private makeRoom(): void {
    this.closeHoles();
    if (this.size * 2 > this.count.length) this.grow();
  }

  /** Closes up the holes in the entry arrays, in order; the hash slots follow their entries, nothing is rehashed. */
  private closeHoles(): void {
    let live = 0;
    for (let e = 0; e < this.size; e++) {
      if (this.slot[e] < 0) continue;
      this.count[live] = this.count[e];
      this.slot[live] = this.slot[e];
      this.slots[this.slot[live] + 2] = live + 1;
      live++;
    }
    this.size = live;
    this.holes = 0;
  }

  /** Doubles the table, its entries kept in order. */
  private grow(): void {
    const old = { slots: this.slots, slot: this.slot, count: this.count, size: this.size };
    const n = 1 << ++this.bits;
    this.slots = new Int32Array(4 * n);
    this.count = new Int32Array(n >> 1);
    this.slot = new Int32Array(n >> 1);
    this.size = 0;
    for (let e = 0; e < old.size; e++) {
      const low = old.slots[old.slot[e]];
      const high = old.slots[old.slot[e] + 1];
      this.claim(this.find(low, high), low, high, old.count[e]);
    }
  }

  /** Forgets every vote; costs the number of entries, not the table's size. */
  clear(): void {
    for (let e = 0; e < this.size; e++) if (this.slot[e] >= 0) this.slots[this.slot[e] + 2] = 0;
    this.size = 0;
    this.holes = 0;
  }

  /** The `n` most-voted entries with at least `atLeast` votes, most first; ties in entry order (the order of first vote since the entry last had none). */
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

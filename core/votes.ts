/**
 * Vote counts per (piece, time shift, pitch shift): an open-addressing hash
 * table in typed arrays, so counting thousands of votes a window allocates
 * nothing. A key is two int32s: the time shift in grains, and the piece
 * (22 bits, four million pieces) with the pitch shift (9 bits). Counts can go down as well as up (a streaming window
 * takes back the votes of notes it forgets); entries that fall to zero are
 * dropped when the table is rebuilt.
 *
 * @example
 *   const votes = new VoteTable();
 *   votes.add(3, -7680, 5, 1); votes.add(3, -7680, 5, 1);
 *   const [slot] = votes.top(1);
 *   [votes.pieceAt(slot), votes.shiftAt(slot), votes.dpAt(slot), votes.countAt(slot)]   // → [3, -7680, 5, 2]
 */

export class VoteTable {
  private bits: number;
  /** The time shift, and the piece with the pitch shift: integer compares only. */
  private low: Int32Array;
  private high: Int32Array;
  private count: Int32Array;
  private occupied: Uint8Array;
  /** Occupied slots, in the order they were first voted for. */
  private used: Int32Array;
  private size = 0;

  constructor(bits = 12) {
    this.bits = bits;
    this.low = new Int32Array(1 << bits);
    this.high = new Int32Array(1 << bits);
    this.count = new Int32Array(1 << bits);
    this.occupied = new Uint8Array(1 << bits);
    this.used = new Int32Array(1 << (bits - 1));
  }

  private slotOf(low: number, high: number): number {
    const mask = (1 << this.bits) - 1;
    let s = Math.imul(low ^ Math.imul(high, 0x85ebca6b), 0x9e3779b1) >>> (32 - this.bits);
    while (this.occupied[s] && (this.low[s] !== low || this.high[s] !== high)) s = (s + 1) & mask;
    return s;
  }

  /** Adds `delta` votes for a piece, a time shift in whole grains (int32) and a pitch shift in −255…255. */
  add(piece: number, shift: number, dp: number, delta: number): void {
    const low = shift;
    const high = (piece << 9) | (dp + 256);
    let s = this.slotOf(low, high);
    if (!this.occupied[s]) {
      if (this.size >= this.used.length) {
        this.rebuild();
        s = this.slotOf(low, high);
      }
      this.occupied[s] = 1;
      this.low[s] = low;
      this.high[s] = high;
      this.count[s] = 0;
      this.used[this.size++] = s;
    }
    this.count[s] += delta;
  }

  /** Rehashes the entries still holding votes into a table with room for as many again. */
  private rebuild(): void {
    const live: number[] = [];
    for (let u = 0; u < this.size; u++) if (this.count[this.used[u]] > 0) live.push(this.used[u]);
    const old = { low: this.low, high: this.high, count: this.count };
    while (live.length * 4 > 1 << this.bits) this.bits++;
    const n = 1 << this.bits;
    this.low = new Int32Array(n);
    this.high = new Int32Array(n);
    this.count = new Int32Array(n);
    this.occupied = new Uint8Array(n);
    this.used = new Int32Array(n >> 1);
    this.size = 0;
    for (const o of live) {
      const s = this.slotOf(old.low[o], old.high[o]);
      this.occupied[s] = 1;
      this.low[s] = old.low[o];
      this.high[s] = old.high[o];
      this.count[s] = old.count[o];
      this.used[this.size++] = s;
    }
  }

  /** Forgets every vote; costs the number of entries, not the table's size. */
  clear(): void {
    for (let u = 0; u < this.size; u++) {
      const s = this.used[u];
      this.occupied[s] = 0;
      this.count[s] = 0;
    }
    this.size = 0;
  }

  /** The slots of the `n` most-voted entries, most first; ties keep the order of first vote. */
  top(n: number): number[] {
    const best: number[] = [];
    for (let u = 0; u < this.size; u++) {
      const s = this.used[u];
      const c = this.count[s];
      if (c <= 0 || (best.length === n && c <= this.count[best[n - 1]])) continue;
      let i = best.length < n ? best.length : n - 1;
      while (i > 0 && this.count[best[i - 1]] < c) {
        if (i < n) best[i] = best[i - 1];
        i--;
      }
      best[i] = s;
    }
    return best;
  }

  pieceAt(slot: number): number {
    return this.high[slot] >>> 9;
  }

  shiftAt(slot: number): number {
    return this.low[slot];
  }

  dpAt(slot: number): number {
    return (this.high[slot] & 511) - 256;
  }

  countAt(slot: number): number {
    return this.count[slot];
  }
}

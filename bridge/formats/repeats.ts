/**
 * Writing out repeats: the order bars are played in, from their repeat signs
 * and numbered endings, as MusicXML 4.0 marks them (`<repeat
 * direction="forward|backward" times="n"/>`, `<ending number="1, 2">`).
 *
 * A backward repeat goes back to the latest forward repeat, or to the start,
 * or to just after the previous backward repeat when there is no forward one
 * in between; it is taken `times − 1` times (once by default). A bar under
 * numbered endings is played only on the passes it names. Da capo, dal segno
 * and coda jumps are not followed: the music is read as written from there.
 *
 * @example
 *   // |: A | B :| C    (bar 0 opens the repeat, bar 1 closes it)
 *   playOrder([{ forward: true, times: 0, endings: null }, { forward: false, times: 2, endings: null }, { forward: false, times: 0, endings: null }])
 *   // → [0, 1, 0, 1, 2]
 *   // |: A |1 B :|2 C |
 *   playOrder([{ forward: true, times: 0, endings: null }, { forward: false, times: 2, endings: [1] }, { forward: false, times: 0, endings: [2] }])
 *   // → [0, 1, 0, 2]
 */

export interface BarRepeats {
  /** A forward repeat sign at the bar's start. */
  forward: boolean;
  /** A backward repeat sign at the bar's end: how many times its section is played in all; 0 for none. */
  times: number;
  /** The passes (1, 2, …) on which the bar is played, when it sits under numbered endings; null for every pass. */
  endings: readonly number[] | null;
}

/** Bar indices in playing order. Throws a RangeError when writing the repeats out passes `maxBars` bars. */
export function playOrder(bars: readonly BarRepeats[], maxBars = 1_000_000): number[] {
  const order: number[] = [];
  const taken = new Map<number, number>();
  let start = 0;
  let pass = 1;
  let back = false;
  for (let i = 0; i < bars.length; ) {
    const bar = bars[i];
    if (bar.forward && !back) {
      start = i;
      pass = 1;
    }
    back = false;
    if (bar.endings && !bar.endings.includes(pass)) {
      i++;
      continue;
    }
    order.push(i);
    if (order.length > maxBars) throw new RangeError(`its repeats written out come to more than ${maxBars.toLocaleString('en')} bars`);
    const done = taken.get(i) ?? 0;
    if (bar.times > 1 && done < bar.times - 1) {
      taken.set(i, done + 1);
      pass++;
      i = start;
      back = true;
      continue;
    }
    if (bar.times > 0) {
      taken.delete(i);
      start = i + 1;
      pass = 1;
    }
    i++;
  }
  return order;
}

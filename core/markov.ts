/**
 * A variable-order Markov chain over melodies: the demo's built-in
 * generator. Each step looks for the longest recent context (up to
 * `maxOrder` events) seen in the training tunes and samples what followed
 * it there, falling back to shorter contexts. Long contexts make it copy
 * whole phrases — exactly what earwitness is there to catch.
 * (Variable-order Markov models: Ron, Singer & Tishby 1996; Begleiter,
 * El-Yaniv & Yona 2004, "On prediction using variable order Markov models".)
 *
 * @example
 *   const chain = trainChain([tuneA, tuneB], 4);
 *   const gen = generator(chain, seededRandom(3));
 *   gen.next()   // → { pitch: 67, duration: 0.5 }
 */

/** One melodic event: a pitch held for a duration in beats, advancing time by `step` beats. */
export interface MelodyEvent {
  pitch: number;
  duration: number;
  /** Beats from this event's onset to the next one's. */
  step: number;
}

export interface Chain {
  maxOrder: number;
  /** Context key → events that followed it. */
  table: Map<string, MelodyEvent[]>;
}

const symbol = (e: MelodyEvent): string => `${e.pitch}:${e.duration}:${e.step}`;
const contextKey = (events: readonly MelodyEvent[]): string => events.map(symbol).join(' ');

/** Learns every context of length 0…maxOrder in each tune. */
export function trainChain(tunes: readonly (readonly MelodyEvent[])[], maxOrder: number): Chain {
  if (!(Number.isInteger(maxOrder) && maxOrder >= 0)) throw new RangeError(`maxOrder must be a whole number ≥ 0, got ${maxOrder}`);
  const table = new Map<string, MelodyEvent[]>();
  let trained = 0;
  for (const tune of tunes) {
    if (tune.length === 0) continue;
    trained++;
    for (let i = 0; i < tune.length; i++) {
      for (let k = 0; k <= Math.min(maxOrder, i); k++) {
        const key = contextKey(tune.slice(i - k, i));
        const list = table.get(key);
        if (list) list.push(tune[i]);
        else table.set(key, [tune[i]]);
      }
    }
  }
  if (trained === 0) throw new RangeError('a chain needs at least one tune with notes');
  return { maxOrder, table };
}

/** An endless stream of events sampled from the chain. */
export function generator(chain: Chain, rand: () => number): { next(): MelodyEvent } {
  const history: MelodyEvent[] = [];
  return {
    next() {
      for (let k = Math.min(chain.maxOrder, history.length); k >= 0; k--) {
        const options = chain.table.get(contextKey(history.slice(history.length - k)));
        if (options) {
          const e = options[Math.floor(rand() * options.length)];
          history.push(e);
          if (history.length > chain.maxOrder) history.shift();
          return e;
        }
      }
      throw new Error('unreachable: the empty context always has options');
    },
  };
}

/** A tune's top voice as melody events: the highest note at each onset. */
export function melodyOf(notes: readonly { onset: number; duration: number; pitch: number }[]): MelodyEvent[] {
  const top = new Map<number, { onset: number; duration: number; pitch: number }>();
  for (const n of notes) {
    const t = top.get(n.onset);
    if (!t || n.pitch > t.pitch) top.set(n.onset, n);
  }
  const line = [...top.values()].sort((a, b) => a.onset - b.onset);
  return line.map((n, i) => ({ pitch: n.pitch, duration: n.duration, step: i + 1 < line.length ? line[i + 1].onset - n.onset : n.duration }));
}

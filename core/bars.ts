/**
 * Bars and beats: a position in quarter-note beats as a musician counts it,
 * bar:beat in the piece's own metre, both counted from 1.
 *
 * A metre is the list of time signatures and where each takes effect (in
 * quarter-note beats from the start). None, or none at beat 0, counts as 4/4
 * from the start, as SMF 1.0 has it. A bar of n/d lasts n·4/d quarter notes
 * (6/8 = 3). The beat counted is the signature's note value, except in
 * compound metres (6, 9, 12… eighths or sixteenths), where it is the dotted
 * note of three: a 6/8 jig counts two beats a bar. A first bar shorter than
 * the bar that follows it, in a signature of its own that changes after one
 * bar (a 1/4 bar, then 4/4), is a pickup: bar 0, so the first full bar is
 * bar 1. A signature that takes effect inside a bar starts a new bar there.
 *
 * @example
 *   barBeat([{ beat: 0, numerator: 6, denominator: 8 }], 4.5)     // → { bar: 2, beatInBar: 2 }
 *   barBeat([{ beat: 0, numerator: 1, denominator: 4 }, { beat: 1, numerator: 4, denominator: 4 }], 0)   // → { bar: 0, beatInBar: 1 }
 *   barBeat([], -2)                                                 // → null (before the piece begins)
 */

export interface TimeSignature {
  /** Where it takes effect, in quarter-note beats from the start. */
  beat: number;
  /** Counted units a bar (the upper figure). */
  numerator: number;
  /** The unit's note value: 4 = quarter note, 8 = eighth (the lower figure, a power of two). */
  denominator: number;
}

/** A piece's or a session's metre: its time signatures in order. */
export type Meter = readonly TimeSignature[];

export const COMMON_TIME: TimeSignature = { beat: 0, numerator: 4, denominator: 4 };

export interface BarBeat {
  /** Counted from 1; 0 is a pickup bar. */
  bar: number;
  /** Counted from 1 in the bar's counted beat; 2.5 is halfway through beat 2. */
  beatInBar: number;
}

/** Quarter notes a bar of this signature lasts. */
export const barQuarters = (s: Pick<TimeSignature, 'numerator' | 'denominator'>): number => (s.numerator * 4) / s.denominator;

/** Compound metres count the dotted note of three units: 6/8, 9/8, 12/8, 6/16 … */
const isCompound = (s: Pick<TimeSignature, 'numerator' | 'denominator'>): boolean => s.numerator > 3 && s.numerator % 3 === 0 && s.denominator >= 8;

/** Quarter notes one counted beat of this signature lasts. */
export const beatQuarters = (s: Pick<TimeSignature, 'numerator' | 'denominator'>): number => ((isCompound(s) ? 3 : 1) * 4) / s.denominator;

/** Tolerance for float noise in beat positions read from ticks. */
const EPS = 1e-9;

interface Segment extends TimeSignature {
  /** Bar number of the first bar this signature starts. */
  firstBar: number;
}

/** The metre with 4/4 filled in where it says nothing, later signatures at one beat replacing earlier ones. */
export function normalMeter(meter: Meter): TimeSignature[] {
  const valid = meter.filter((s) => Number.isFinite(s.beat) && s.beat >= 0 && s.numerator >= 1 && s.denominator >= 1).sort((a, b) => a.beat - b.beat);
  const out: TimeSignature[] = [];
  for (const s of valid) {
    const last = out[out.length - 1];
    if (last && Math.abs(last.beat - s.beat) < EPS) out[out.length - 1] = { ...s, beat: last.beat };
    else if (!last || last.numerator !== s.numerator || last.denominator !== s.denominator) out.push({ beat: s.beat, numerator: s.numerator, denominator: s.denominator });
  }
  if (out.length === 0 || out[0].beat > EPS) out.unshift(COMMON_TIME);
  return out;
}

/** Whether the metre opens with a pickup bar (see the module comment). */
export function hasPickup(meter: Meter): boolean {
  const m = normalMeter(meter);
  return m.length >= 2 && Math.abs(m[1].beat - barQuarters(m[0])) < EPS && barQuarters(m[0]) < barQuarters(m[1]);
}

function segments(meter: Meter): Segment[] {
  const m = normalMeter(meter);
  let bar = hasPickup(m) ? 0 : 1;
  return m.map((s, i) => {
    if (i > 0) {
      const prev = m[i - 1];
      bar += Math.ceil((s.beat - prev.beat) / barQuarters(prev) - EPS);
    }
    return { ...s, firstBar: bar };
  });
}

/** Rounds away float noise: positions are kept to a millionth of a beat. */
const tidy = (x: number): number => Math.round(x * 1e6) / 1e6;

/** The bar and beat of a position in quarter-note beats; null before the start (a negative position). */
export function barBeat(meter: Meter, beat: number): BarBeat | null {
  if (!(beat > -EPS)) return null;
  const segs = segments(meter);
  let i = segs.length - 1;
  while (i > 0 && segs[i].beat > beat + EPS) i--;
  const s = segs[i];
  const into = Math.max(0, beat - s.beat);
  const bars = Math.floor(into / barQuarters(s) + EPS);
  return { bar: s.firstBar + bars, beatInBar: tidy(1 + (into - bars * barQuarters(s)) / beatQuarters(s)) };
}

/** A position's `bar` and `beatInBar` fields as JSON carries them: null before the start, or for no position at all. */
export function barFields(meter: Meter, beat: number | null): { bar: number | null; beatInBar: number | null } {
  const at = beat === null ? null : barBeat(meter, beat);
  return { bar: at?.bar ?? null, beatInBar: at?.beatInBar ?? null };
}

/** The position in quarter-note beats of a bar and beat (the inverse of barBeat). */
export function beatOf(meter: Meter, at: BarBeat): number {
  const segs = segments(meter);
  let i = segs.length - 1;
  while (i > 0 && segs[i].firstBar > at.bar) i--;
  const s = segs[i];
  return tidy(s.beat + (at.bar - s.firstBar) * barQuarters(s) + (at.beatInBar - 1) * beatQuarters(s));
}

/** "4/4", "6/8". */
export const signatureText = (s: Pick<TimeSignature, 'numerator' | 'denominator'>): string => `${s.numerator}/${s.denominator}`;

/** "6/8" → { numerator: 6, denominator: 8 }; null unless two whole numbers, the lower a power of two up to 64. */
export function parseSignature(text: string): { numerator: number; denominator: number } | null {
  const m = /^\s*(\d{1,2})\s*\/\s*(\d{1,2})\s*$/.exec(text);
  if (!m) return null;
  const [numerator, denominator] = [Number(m[1]), Number(m[2])];
  return numerator >= 1 && denominator >= 1 && denominator <= 64 && (denominator & (denominator - 1)) === 0 ? { numerator, denominator } : null;
}

/**
 * The daemon's beat position: its own clock at a tempo, until MIDI clock
 * arrives and drives it.
 *
 * MIDI 1.0 arithmetic: Timing Clock comes 24 times a quarter note; Song
 * Position Pointer counts "MIDI beats" of 6 clocks, i.e. sixteenths, so
 * SPP 8 is beat 2.0; Start plays from position 0. The position is kept as
 * the one the *next* clock plays, so Start, SPP and Continue all mean "the
 * next clock sounds here", and Stop holds the position of the last clock.
 * Between clocks the position moves on at the measured clock rate, never
 * past where the next clock will put it.
 *
 * @example
 *   let c = internalClock(120, 0);
 *   beatAt(c, 1500)                           // → 3   (1.5 s at 120 BPM)
 *   c = midiStart(c, 2000);
 *   for (let i = 0; i < 25; i++) c = midiTick(c, 2000 + i * 20);
 *   beatAt(c, 2480)                           // → 1   (the first clock plays 0, 24 more make a beat)
 *   beatAt(songPosition(c, 8, 3000), 3000)    // → 2
 */

/** MIDI 1.0: Timing Clock messages per quarter note. */
export const CLOCKS_PER_BEAT = 24;
/** MIDI 1.0: one Song Position Pointer unit ("MIDI beat") is 6 clocks, a sixteenth note. */
export const CLOCKS_PER_SPP_UNIT = 6;
/** Largest SPP value: a 14-bit count. */
export const MAX_SPP = 0x3fff;

/** Tempi the daemon accepts, in quarter notes per minute. */
export const MIN_BPM = 1;
export const MAX_BPM = 999;
export const isTempo = (bpm: number): boolean => Number.isFinite(bpm) && bpm >= MIN_BPM && bpm <= MAX_BPM;

/** Song Position Pointer value → beat (quarter notes). */
export const sppToBeat = (value: number): number => (value * CLOCKS_PER_SPP_UNIT) / CLOCKS_PER_BEAT;

/** Clock interval in ms → tempo. */
export const clockIntervalToBpm = (ms: number): number => 60_000 / (ms * CLOCKS_PER_BEAT);

export interface Clock {
  /** 'internal' until MIDI clock or a transport message arrives. */
  source: 'internal' | 'midi';
  running: boolean;
  bpm: number;
  /** Beat position at `anchorMs` (for MIDI: the position the last clock played). */
  beat: number;
  anchorMs: number;
  /** MIDI only: the position the next clock plays, in clocks from the song's start (whole, so no rounding creeps in). */
  nextClock: number;
  /** MIDI only: a clock has played since Start/Continue/SPP, so `beat` is a sounded position. */
  ticked: boolean;
}

/** The daemon's own clock, running from beat 0 at `nowMs`. */
export const internalClock = (bpm: number, nowMs: number): Clock => ({ source: 'internal', running: true, bpm, beat: 0, anchorMs: nowMs, nextClock: 0, ticked: false });

/** Beat position at `nowMs`. */
export function beatAt(c: Clock, nowMs: number): number {
  if (!c.running) return c.beat;
  const elapsed = Math.max(0, nowMs - c.anchorMs);
  if (c.source === 'internal') return c.beat + (elapsed * c.bpm) / 60_000;
  if (!c.ticked) return c.beat;
  // Between clocks: move on at the clock rate, but not past the next clock's position.
  return Math.min(c.nextClock / CLOCKS_PER_BEAT, c.beat + (elapsed * c.bpm) / 60_000);
}

/** A new tempo from now on (OSC `/ew/tempo`, a preset, `--bpm`); the position carries on from where it is. */
export const setTempo = (c: Clock, bpm: number, nowMs: number): Clock =>
  c.source === 'midi' ? { ...c, bpm } : { ...c, beat: beatAt(c, nowMs), anchorMs: nowMs, bpm };

/** Moves the daemon's own clock to `beat` now (OSC `/ew/beat`); MIDI clock, once it has run, is left to drive. */
export const setBeat = (c: Clock, beat: number, nowMs: number): Clock => (c.source === 'midi' ? c : { ...c, beat, anchorMs: nowMs });

/** The MIDI clock a position falls on (the daemon's own clock, when MIDI takes over from it). */
const nearestClock = (beat: number): number => Math.round(beat * CLOCKS_PER_BEAT);

/** Waiting at `clock` for the next Timing Clock. */
const poised = (c: Clock, clock: number, running: boolean, nowMs: number): Clock =>
  ({ ...c, source: 'midi', running, beat: clock / CLOCKS_PER_BEAT, nextClock: clock, anchorMs: nowMs, ticked: false });

/** MIDI Start: play from position 0 at the next clock. */
export const midiStart = (c: Clock, nowMs: number): Clock => poised(c, 0, true, nowMs);

/** MIDI Continue: play from the current position at the next clock. */
export const midiContinue = (c: Clock, nowMs: number): Clock => poised(c, c.source === 'midi' ? c.nextClock : nearestClock(beatAt(c, nowMs)), true, nowMs);

/** MIDI Stop: the position holds where the last clock put it. */
export const midiStop = (c: Clock, nowMs: number): Clock => (c.source === 'midi' ? { ...c, running: false } : poised(c, nearestClock(beatAt(c, nowMs)), false, nowMs));

/** MIDI Song Position Pointer (sixteenths): the next clock plays there. */
export const songPosition = (c: Clock, value: number, nowMs: number): Clock => poised(c, value * CLOCKS_PER_SPP_UNIT, c.source === 'midi' && c.running, nowMs);

/**
 * MIDI Timing Clock at `nowMs`: this clock plays the pending position, the
 * next one plays 1/24 beat later. The tempo follows the clock interval,
 * smoothed over a sixteenth's worth of clocks so one late message does not
 * jolt it.
 */
export function midiTick(c: Clock, nowMs: number): Clock {
  if (c.source === 'midi' && !c.running) return c;
  const base = c.source === 'midi' ? c : midiContinue(c, nowMs);
  const interval = nowMs - base.anchorMs;
  const measured = base.ticked && interval > 0 ? clockIntervalToBpm(interval) : null;
  const bpm = measured !== null && isTempo(measured) ? base.bpm + (measured - base.bpm) / CLOCKS_PER_SPP_UNIT : base.bpm;
  return { ...base, beat: base.nextClock / CLOCKS_PER_BEAT, nextClock: base.nextClock + 1, anchorMs: nowMs, ticked: true, bpm };
}

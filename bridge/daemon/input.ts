/**
 * What an input adapter (OSC, MIDI) tells the daemon, once it has checked
 * it: the one vocabulary of the note stream. Channels are 1–16 as musicians
 * count; beats are quarter notes.
 *
 * @example
 *   daemon.handle({ kind: 'note', pitch: 60, velocity: 100, duration: 0.5, beat: null, channel: 1 }, Date.now());
 */
export type InputCommand =
  /** A whole note; `beat` null = now. */
  | { kind: 'note'; pitch: number; velocity: number; duration: number; beat: number | null; channel: number }
  | { kind: 'on'; pitch: number; velocity: number; channel: number }
  | { kind: 'off'; pitch: number; channel: number }
  | { kind: 'tempo'; bpm: number }
  | { kind: 'beat'; beat: number }
  /** Empties the window: a new passage, same session. */
  | { kind: 'reset' }
  /** MIDI real-time and Song Position Pointer (value in sixteenths). */
  | { kind: 'clock' }
  | { kind: 'start' }
  | { kind: 'continue' }
  | { kind: 'stop' }
  | { kind: 'position'; value: number };

/** Input that was ignored, by kind (the key of /health's `badInput`) with what exactly was wrong. */
export interface BadInput {
  kind: string;
  detail: string;
}

/**
 * Latest beat accepted: grains (3840 a beat) stay far inside 2^31 for every
 * index, and at 120 BPM this is over 60 hours.
 */
export const MAX_BEAT = 500_000;
/** Longest note accepted, in beats. */
export const MAX_DURATION = 1024;

export const isPitch = (n: number): boolean => Number.isInteger(n) && n >= 0 && n <= 127;
export const isChannel = (n: number): boolean => Number.isInteger(n) && n >= 1 && n <= 16;
export const isBeat = (n: number): boolean => Number.isFinite(n) && n >= 0 && n <= MAX_BEAT;

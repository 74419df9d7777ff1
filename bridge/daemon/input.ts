/**
 * What input adapters (OSC, MIDI) check before the daemon hears it: the
 * ranges of pitches, channels and beats, and how ignored input is told.
 * The commands themselves, the one vocabulary of the note stream, are
 * core's (core/session-state.ts InputCommand), which the daemon's reducer
 * takes.
 *
 * @example
 *   isPitch(60) && isChannel(1)   // → true
 *   daemon.handle({ kind: 'note', pitch: 60, velocity: 100, duration: 0.5, beat: null, channel: 1 }, Date.now());
 */
export type { InputCommand } from '../../core/session-state.js';

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

/**
 * The settings a report is scored with, and the one rule for each: the
 * CLI's options (`--window 8`) and the daemon's `POST /report` query
 * parameters (`?window=8`) are read through these same functions, so a
 * value is accepted, or refused in the same words, wherever it is given.
 * `name` is how the caller's user wrote it.
 *
 * @example
 *   SETTING_RULES.window('--window', '8')      // → 8
 *   SETTING_RULES.window('window', '-1')       // throws UsageError: window must be a positive number, got "-1"
 *   SETTING_RULES.pitch('pitch', 'diatonic')   // → 'morphetic'
 *   modeOf({ tolerance: 0.1 })                 // → { tolerance: 0.1, tempoFree: false }
 */
import type { PitchMode } from '../../core/note.js';
import type { MatchMode } from '../../core/pipeline.js';
import { PITCH_CHOICES, parsePitch } from '../../core/words.js';
import { DEFAULT_WINDOW } from '../../core/windows.js';
import { DEFAULT_MIN_NOTES } from '../../core/report.js';
import { UsageError, parseNumber, positive } from '../formats/user-error.js';

/** What scoring queries against a corpus takes: report, check, and the daemon's /report. */
export interface ReportOptions {
  window: number;
  hop: number;
  pitch: PitchMode;
  seed: number;
  tolerance: number;
  tempoFree?: boolean;
  exact?: boolean;
  minNotes: number;
}

/** The settings when none is given: 16-beat windows every 8 beats, chromatic, exact timing, 8 notes at least, seed 1. */
export const REPORT_DEFAULTS = { window: DEFAULT_WINDOW.window, hop: DEFAULT_WINDOW.hop, pitch: 'chromatic', seed: 1, tolerance: 0, minNotes: DEFAULT_MIN_NOTES } as const satisfies ReportOptions;

export const modeOf = (o: Pick<ReportOptions, 'tolerance' | 'tempoFree'>): MatchMode => ({ tolerance: o.tolerance, tempoFree: o.tempoFree ?? false });

/** Each setting given as text, read or refused; `name` is the option or parameter as the user wrote it. */
export const SETTING_RULES = {
  window: (name: string, v: string): number => positive(name)(v),
  hop: (name: string, v: string): number => positive(name)(v),
  tolerance: (name: string, v: string): number => parseNumber(name, v, (n) => n >= 0 && n < 1, 'a number of beats from 0 up to (not including) 1'),
  minNotes: (name: string, v: string): number => parseNumber(name, v, (n) => Number.isInteger(n) && n >= 1, 'a whole number of at least 1'),
  pitch: (name: string, v: string): PitchMode => {
    const mode = parsePitch(v);
    if (mode === null) throw new UsageError(`${name} ${v}: allowed: ${PITCH_CHOICES.join(', ')}`);
    return mode;
  },
};

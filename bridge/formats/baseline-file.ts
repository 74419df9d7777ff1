/**
 * `--baseline FILE`: a human baseline saved from `earwitness baseline --json`,
 * checked field by field, and checked to have been computed with the same
 * window, hop, pitch, matching mode and too-short windows as the scores it is shown beside (a baseline of
 * 8-beat windows says nothing about 16-beat ones).
 *
 * @example
 *   const b = readBaselineFile('baseline.json');        // as a commander argParser
 *   checkBaselineFits(b, { window: 16, hop: 8, pitch: 'chromatic', mode: EXACT_MODE, minNotes: 8 });
 */
import { z } from 'zod';
import { EXACT_MODE, type MatchMode } from '../../core/pipeline.js';
import { PITCH_MODES, type PitchMode } from '../../core/note.js';
import type { Baseline } from '../../core/report.js';
import type { WindowShape } from '../../core/windows.js';
import { readJsonFile } from './json-file.js';
import { UsageError } from './user-error.js';
import { readSaved } from './saved.js';

export interface BaselineFile {
  file: string;
  baseline: Baseline;
  mode: MatchMode;
}

const unit = z.number().min(0).max(1).describe('a number from 0 to 1');
const interval = z.tuple([unit, unit]).nullable().describe('[low, high], two numbers from 0 to 1, or null');
/**
 * One human baseline as `baseline --json` writes it and the index's BASE
 * section stores it (bridge/formats/index-file.ts): the schema both readers check.
 */
export const baselineSchema = z.object({
  originality: unit.nullable().describe('a number from 0 to 1, or null'),
  ci95: interval,
  samples: z.array(z.string()).describe('a list of the sampled pieces\' paths'),
  windows: z.number().int().min(0).describe('a whole number of windows'),
  percentiles: z.object({ p50: unit, p90: unit, p95: unit, p99: unit }),
  settings: z.object({
    window: z.number().positive().describe('a positive number of beats'),
    hop: z.number().positive().describe('a positive number of beats'),
    pitch: z.enum(PITCH_MODES as [PitchMode, ...PitchMode[]]).describe(`one of ${PITCH_MODES.join(', ')}`),
    seed: z.number().describe('a number'),
    // Written since windows too short to judge were left out; a baseline without it judged every window.
    minNotes: z.number().int().min(1).default(1).describe('a whole number of notes ≥ 1'),
  }),
  caution: z.string().describe('text'),
});

/** The baseline file: a baseline, and since matching modes came the mode it was matched in (a file without one was matched exactly). */
export const baselineFileSchema = baselineSchema.extend({
  mode: z.object({ tolerance: z.number().min(0).describe('a number of beats ≥ 0'), tempoFree: z.boolean().describe('true or false') }).optional(),
});

export type SavedBaseline = z.infer<typeof baselineSchema>;

/** Reads and checks a baseline file; a problem names the file, the field, what was there and what was expected, and how to make a good one. */
export function readBaselineFile(file: string): BaselineFile {
  const fix = `save one with "earwitness baseline --json --corpus PATH > ${file}"`;
  const json = readJsonFile('--baseline', file, fix);
  const { mode, ...baseline } = readSaved(baselineFileSchema, json, (p) =>
    new UsageError(`--baseline ${file}: field ${p.field}: got ${p.got}; allowed: ${p.expected}; expected the output of "earwitness baseline --json": ${fix}`));
  return { file, baseline, mode: mode ?? EXACT_MODE };
}

/** Throws unless the baseline was computed with the given window, hop, pitch and matching mode. */
export function checkBaselineFits({ file, baseline, mode }: BaselineFile, used: WindowShape & { pitch: PitchMode; mode: MatchMode; minNotes: number }): void {
  const s = baseline.settings;
  const how = (w: number, h: number, p: PitchMode, m: MatchMode, n: number): string =>
    `window ${w}, hop ${h}, ${p} pitch, tolerance ${m.tolerance}${m.tempoFree ? ', tempo-free' : ''}, windows of at least ${n} notes`;
  const theirs = how(s.window, s.hop, s.pitch, mode, s.minNotes);
  const ours = how(used.window, used.hop, used.pitch, used.mode, used.minNotes);
  if (theirs !== ours) {
    throw new UsageError(`--baseline ${file}: computed with ${theirs}, but these scores use ${ours}; compute the baseline with the same settings`);
  }
}

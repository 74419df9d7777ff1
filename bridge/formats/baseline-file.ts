/**
 * `--baseline FILE`: a human baseline saved from `earwitness baseline --json`,
 * checked field by field, and checked to have been computed with the same
 * window, hop, pitch and matching mode as the scores it is shown beside (a baseline of
 * 8-beat windows says nothing about 16-beat ones).
 *
 * @example
 *   const b = readBaselineFile('baseline.json');        // as a commander argParser
 *   checkBaselineFits(b, { window: 16, hop: 8, pitch: 'chromatic', mode: EXACT_MODE });
 */
import { z } from 'zod';
import { EXACT_MODE, type MatchMode } from '../../core/match-mode.js';
import { PITCH_MODES, type PitchMode } from '../../core/note.js';
import type { Baseline } from '../../core/report.js';
import type { WindowShape } from '../../core/windows.js';
import { readJsonFile } from './json-file.js';
import { UsageError } from './user-error.js';

export interface BaselineFile {
  file: string;
  baseline: Baseline;
  mode: MatchMode;
}

const unit = z.number().min(0).max(1);
const interval = z.tuple([unit, unit]).nullable();
const schema = z.object({
  originality: unit.nullable(),
  ci95: interval,
  samples: z.array(z.string()),
  windows: z.number().int().min(0),
  percentiles: z.object({ p50: unit, p90: unit, p95: unit, p99: unit }),
  settings: z.object({ window: z.number().positive(), hop: z.number().positive(), pitch: z.enum(PITCH_MODES as [PitchMode, ...PitchMode[]]), seed: z.number() }),
  caution: z.string(),
  // Written by `baseline --json` since matching modes came; a file without it was matched exactly.
  mode: z.object({ tolerance: z.number().min(0), tempoFree: z.boolean() }).optional(),
});

/** Reads and checks a baseline file; every problem names the file and the field. */
export function readBaselineFile(file: string): BaselineFile {
  const json = readJsonFile('--baseline', file, `save one with "earwitness baseline --json --corpus PATH > ${file}"`);
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new UsageError(`--baseline ${file}: field ${issue.path.join('.') || '(top level)'}: ${issue.message} (expected the output of "earwitness baseline --json")`);
  }
  const { mode, ...baseline } = parsed.data;
  return { file, baseline, mode: mode ?? EXACT_MODE };
}

/** Throws unless the baseline was computed with the given window, hop, pitch and matching mode. */
export function checkBaselineFits({ file, baseline, mode }: BaselineFile, used: WindowShape & { pitch: PitchMode; mode: MatchMode }): void {
  const s = baseline.settings;
  const how = (w: number, h: number, p: PitchMode, m: MatchMode): string =>
    `window ${w}, hop ${h}, ${p} pitch, tolerance ${m.tolerance}${m.tempoFree ? ', tempo-free' : ''}`;
  const theirs = how(s.window, s.hop, s.pitch, mode);
  const ours = how(used.window, used.hop, used.pitch, used.mode);
  if (theirs !== ours) {
    throw new UsageError(`--baseline ${file}: computed with ${theirs}, but these scores use ${ours}; compute the baseline with the same settings`);
  }
}

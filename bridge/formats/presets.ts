/**
 * Presets for `earwitness listen`: a named set of input, window and warning
 * settings, read from presets/NAME.json or any JSON file, checked with zod.
 * Flags override a preset's values, and the result is checked again, so a
 * bad value is reported the same way wherever it came from: naming the
 * field (or flag) and the values it allows.
 *
 * @example
 *   const jam = loadPreset('jam');                          // presets/jam.json
 *   const mine = loadPreset('./stage.json');                // a file of the same shape
 *   withOverrides(jam, { threshold: '0.8' }).threshold      // → 0.8
 *   withOverrides(jam, { threshold: '2' })                  // throws: --threshold 2: allowed: a number from 0 to 1
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { z } from 'zod';
import { parseSignature } from '../../core/bars.js';
import { parseGrid } from '../../core/words.js';
import { MAX_BPM, MIN_BPM } from '../../core/clock.js';
import { packageRoot } from './package-root.js';
import type { Baseline } from '../../core/report.js';
import { stretchThresholds } from '../../core/stretch.js';
import { INDEX_NAME, IndexFileError, readIndexBaselines } from './index-file.js';
import { UsageError } from './user-error.js';
import { savedProblem } from './saved.js';

export const BUILT_IN_PRESETS = ['jam', 'livecode', 'record'] as const;
export const INPUTS = ['midi', 'osc', 'both'] as const;
/** Longest window: every evaluation scans it against the corpus. */
export const MAX_WINDOW_BEATS = 64;
/** Finest onset grid: a divisor of the point grid's 3840 grains per beat keeps snapped onsets exact. */
export const MAX_GRID = 960;

/**
 * Tolerance of the live presets: the smallest tolerance measured that, after
 * the presets' 1/12-beat grid, catches every copy played within ±0.1 beat at
 * their thresholds, while warning about played unrelated material no more
 * often than about the same material as written (test/bench/RESULTS.md,
 * "How the live presets' tolerance was chosen").
 */
export const LIVE_TOLERANCE = 0.1;

/** What each field allows, in words: the text of every error about it. */
const ALLOWED = {
  name: 'a name of letters, digits, "-" and "_"',
  description: 'a sentence saying what the preset is for',
  input: `one of ${INPUTS.map((i) => `"${i}"`).join(', ')}`,
  window: `a number of beats above 0, at most ${MAX_WINDOW_BEATS}`,
  bpm: `a tempo from ${MIN_BPM} to ${MAX_BPM} quarter notes a minute`,
  threshold: 'a number from 0 to 1, or "auto" (the p99 window score of the human baseline that "earwitness corpus build DIR --baseline" stores)',
  minNotes: 'a whole number of at least 1',
  consecutive: 'a whole number from 1 to 100',
  hysteresis: 'a number from 0 to 1',
  warn: 'true or false',
  grid: `a note value such as "1/16", "1/16T" or "1/32", or a whole number of divisions per beat that divides 3840, from 0 (off) to ${MAX_GRID}`,
  tolerance: 'a number of beats from 0 (exact) up to, not including, 1',
  tempoFree: 'true (also find passages played at 0.5–2 times the corpus tempo) or false',
  minDistinctiveness: 'a number from 0 (warn however common the matched material) to 1 (only material found in one corpus place)',
  earlyBeats: `lengths in beats of the recent stretches that may warn on their own, ascending, each above 0 and at most ${MAX_WINDOW_BEATS} ([] = the whole window only), as in [2, 4, 8]`,
  earlyThreshold: 'the score a stretch must reach: a number from 0 to 1, a list of them, one per length of earlyBeats, or "auto" (each length\'s p99 window score in the human baseline "earwitness corpus build DIR --baseline" stores, plus 0.05)',
  earlyLeftOut: 'a share from 0 up to, not including, 1: of a corpus passage\'s notes, how many a recent stretch may leave out and still warn below its threshold, when every note it holds matches (0 = never)',
  earlyMinOnsets: 'a whole number of at least 1: the different moments a recent stretch\'s notes must start at (a chord counts once)',
  earlyMinDistinctiveness: 'a number from 0 to 1',
  meter: 'a time signature such as "4/4", "3/4" or "6/8"',
} as const;

export type PresetField = keyof typeof ALLOWED;

/** The flag that overrides each field. */
export const FLAG_OF: Record<Exclude<PresetField, 'name' | 'description'>, string> = {
  input: '--input',
  window: '--window',
  bpm: '--bpm',
  threshold: '--threshold',
  minNotes: '--min-notes',
  consecutive: '--consecutive',
  hysteresis: '--hysteresis',
  warn: '--warn / --no-warn',
  grid: '--grid',
  tolerance: '--tolerance',
  tempoFree: '--tempo-free / --no-tempo-free',
  minDistinctiveness: '--min-distinctiveness',
  earlyBeats: '--early-beats',
  earlyThreshold: '--early-threshold',
  earlyLeftOut: '--early-left-out',
  earlyMinOnsets: '--early-min-onsets',
  earlyMinDistinctiveness: '--early-min-distinctiveness',
  meter: '--meter',
};

/** A stretch length without a stored baseline, under "auto", must score this: most of a stretch played as the corpus has it. */
export const EARLY_FALLBACK = 0.9;
/** The share of a quote's notes a player may drop, under which a stretch still warns (test/bench/RESULTS.md: "Early warnings" says how it was chosen). */
export const EARLY_LEFT_OUT = 0.1;
/** Under "auto", a stretch must score this much above its length's p99 in the human baseline. */
export const EARLY_MARGIN = 0.05;

/** "2,4,8" (a flag) or [2, 4, 8] (a file) → [2, 4, 8]; "auto" and anything else are left for the schema. */
const beatsList = (v: unknown): unknown => (typeof v === 'string' && v !== 'auto' ? (v.trim() === '' ? [] : v.split(',').map((x) => (x.trim() !== '' && Number.isFinite(Number(x)) ? Number(x) : x))) : v);

const unit = z.number().min(0).max(1);
/** The preset file's one schema: what loadPreset and withOverrides check, and the Preset type. */
export const presetSchema = z
  .object({
    name: z.string().regex(/^[A-Za-z0-9_-]+$/).describe(ALLOWED.name),
    description: z.string().min(1).describe(ALLOWED.description),
    input: z.enum(INPUTS).describe(ALLOWED.input),
    window: z.number().positive().max(MAX_WINDOW_BEATS).describe(ALLOWED.window),
    bpm: z.number().min(MIN_BPM).max(MAX_BPM).describe(ALLOWED.bpm),
    threshold: z.union([unit, z.literal('auto')]).describe(ALLOWED.threshold),
    minNotes: z.number().int().min(1).describe(ALLOWED.minNotes),
    consecutive: z.number().int().min(1).max(100).describe(ALLOWED.consecutive),
    hysteresis: unit.describe(ALLOWED.hysteresis),
    warn: z.boolean().describe(ALLOWED.warn),
    /** Onsets snap to 1/grid beat before scoring (0 = as played), so clock jitter does not break exact matching. */
    grid: z.preprocess((g) => (typeof g === 'string' ? parseGrid(g) ?? g : g), z.number().int().min(0).max(MAX_GRID).refine((g) => g === 0 || 3840 % g === 0)).describe(ALLOWED.grid),
    /** Played timing a match allows, beats (test/bench/RESULTS.md says how the default was measured). */
    tolerance: z.number().min(0).lt(1).default(LIVE_TOLERANCE).describe(ALLOWED.tolerance),
    /** Also match passages played at another tempo (fingerprint candidates; costs a little more per scoring pass). */
    tempoFree: z.boolean().default(false).describe(ALLOWED.tempoFree),
    /** Matches less distinctive than this never warn. */
    minDistinctiveness: unit.default(0).describe(ALLOWED.minDistinctiveness),
    /** Recent stretches judged on their own (core/stretch.ts): how early a quote can warn. */
    earlyBeats: z
      .preprocess(beatsList, z.array(z.number().positive().max(MAX_WINDOW_BEATS)).max(16).refine((xs) => xs.every((x, i) => i === 0 || xs[i - 1] < x)))
      .default([])
      .describe(ALLOWED.earlyBeats),
    earlyThreshold: z.preprocess(beatsList, z.union([unit, z.array(unit).min(1).max(16), z.literal('auto')])).default('auto').describe(ALLOWED.earlyThreshold),
    /** A player who drops a note of a quote still quotes it; one who plays another note has left it (core/stretch.ts `leavesOut`). */
    earlyLeftOut: z.number().min(0).lt(1).default(EARLY_LEFT_OUT).describe(ALLOWED.earlyLeftOut),
    earlyMinOnsets: z.number().int().min(1).default(6).describe(ALLOWED.earlyMinOnsets),
    earlyMinDistinctiveness: unit.default(0.5).describe(ALLOWED.earlyMinDistinctiveness),
    /** The session's time signature, for its bars and beats (optional; 4/4 when left out). */
    meter: z.string().refine((m) => parseSignature(m) !== null).default('4/4').describe(ALLOWED.meter),
  })
  .strict();

export type Preset = z.infer<typeof presetSchema>;

/**
 * A preset ready to run: its threshold a number, "auto" resolved
 * (resolveThreshold), and each early stretch length's threshold (absent:
 * EARLY_FALLBACK for each). `earlyUncalibrated` lists the lengths "auto"
 * found no stored baseline for.
 */
export type LivePreset = Preset & { threshold: number; earlyThresholds?: number[]; earlyUncalibrated?: number[] };


export function parsePreset(value: unknown, source: string): Preset {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) throw new UsageError(`preset ${source}: must be a JSON object with the fields ${Object.keys(ALLOWED).join(', ')}`);
  const p = savedProblem(presetSchema, value);
  if (!p) return presetSchema.parse(value);
  if (p.unknown) throw new UsageError(`preset ${source}: field "${p.field}": no such field; the fields are ${Object.keys(ALLOWED).join(', ')}`);
  throw new UsageError(`preset ${source}: field "${p.field}": got ${p.got}; allowed: ${p.expected}`);
}

/** A built-in preset by name, or a JSON file by path. */
export function loadPreset(nameOrPath: string): Preset {
  const builtIn = (BUILT_IN_PRESETS as readonly string[]).includes(nameOrPath);
  if (!builtIn && !/\.json$/i.test(nameOrPath)) {
    throw new UsageError(`--preset ${nameOrPath}: no such preset; the presets are ${BUILT_IN_PRESETS.join(', ')}, or give the path of a .json file`);
  }
  const file = builtIn ? join(packageRoot(), 'presets', `${nameOrPath}.json`) : nameOrPath;
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(`--preset ${file}: cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new UsageError(`preset ${file}: not JSON (${(e as Error).message})`);
  }
  return parsePreset(json, file);
}

export type Overrides = Partial<Record<keyof typeof FLAG_OF, string | boolean>>;

/** Flag text → the value the schema checks: numbers where the text is one, else the text, so the error can quote it. */
const flagValue = (v: string | boolean): unknown => (typeof v === 'string' && v.trim() !== '' && Number.isFinite(Number(v)) ? Number(v) : v);

/** The preset with the given flags' values in place of its own, checked again. */
export function withOverrides(preset: Preset, overrides: Overrides): Preset {
  const given = Object.entries(overrides).filter(([, v]) => v !== undefined) as [keyof typeof FLAG_OF, string | boolean][];
  const merged: Record<string, unknown> = { ...preset };
  for (const [field, v] of given) merged[field] = flagValue(v);
  const p = savedProblem(presetSchema, merged);
  if (!p) return presetSchema.parse(merged);
  const raw = overrides[p.field as keyof typeof FLAG_OF];
  const flagged = raw === undefined ? `preset ${preset.name}: field "${p.field}"` : `${FLAG_OF[p.field as keyof typeof FLAG_OF]} ${raw}`;
  throw new UsageError(`${flagged}: allowed: ${p.expected}`);
}

/** The index file a --corpus path opens through, or null when it has none. */
function indexFileOf(corpus: string): string | null {
  try {
    if (!statSync(corpus).isDirectory()) return corpus;
  } catch {
    return null;
  }
  const inside = join(corpus, INDEX_NAME);
  return existsSync(inside) ? inside : null;
}

/**
 * The preset with threshold "auto" replaced by the p99 window score of the
 * corpus's stored human baseline for the preset's window: a warning then
 * says "this borrows more than 99% of the corpus's own windows do".
 */
export function resolveThreshold(preset: Preset, corpus: string): LivePreset {
  const early = earlyThresholds(preset, corpus);
  if (preset.threshold !== 'auto') return { ...preset, threshold: preset.threshold, ...early };
  const how = `"earwitness corpus build DIR --baseline" stores one`;
  const file = indexFileOf(corpus);
  if (!file) throw new UsageError(`preset ${preset.name}: threshold "auto" needs the corpus's human baseline, and ${corpus} has no corpus index; ${how}`);
  let stored: Baseline[];
  try {
    stored = readIndexBaselines(file);
  } catch (e) {
    if (e instanceof IndexFileError) throw new UsageError(e.message);
    throw e;
  }
  const fits = stored.find((b) => b.settings?.window === preset.window && b.settings?.pitch === 'chromatic' && typeof b.percentiles?.p99 === 'number');
  if (!fits) {
    const held = stored.map((b) => b.settings?.window).filter((w) => typeof w === 'number');
    const has = held.length ? `holds baselines for windows of ${held.join(', ')} beats only` : 'holds no baseline';
    throw new UsageError(`preset ${preset.name}: threshold "auto" needs a human baseline of ${preset.window}-beat windows, and ${file} ${has}; ${how} (--baseline-windows ${preset.window})`);
  }
  return { ...preset, threshold: fits.percentiles.p99, ...early };
}

/** The baselines an index stores, or none when the corpus has no index (a damaged one is an error). */
function storedBaselines(corpus: string): Baseline[] {
  const file = indexFileOf(corpus);
  if (!file) return [];
  try {
    return readIndexBaselines(file);
  } catch (e) {
    if (e instanceof IndexFileError) throw new UsageError(e.message);
    throw e;
  }
}

/**
 * Each early stretch length's threshold: the preset's number, or under
 * "auto" the p99 window score of the stored human baseline of that length
 * plus EARLY_MARGIN (core/stretch.ts stretchThresholds), EARLY_FALLBACK
 * for a length none is stored for.
 */
export function earlyThresholds(preset: Preset, corpus: string): { earlyThresholds: number[]; earlyUncalibrated: number[] } {
  const lengths = preset.earlyBeats;
  const fixed = preset.earlyThreshold;
  if (lengths.length === 0) return { earlyThresholds: [], earlyUncalibrated: [] };
  if (Array.isArray(fixed)) {
    if (fixed.length !== lengths.length) throw new UsageError(`preset ${preset.name}: field "earlyThreshold": got ${fixed.length} thresholds for the ${lengths.length} lengths of earlyBeats; give one per length, one number for all, or "auto"`);
    return { earlyThresholds: fixed, earlyUncalibrated: [] };
  }
  if (fixed !== 'auto') return { earlyThresholds: lengths.map(() => fixed), earlyUncalibrated: [] };
  const stored = storedBaselines(corpus);
  const p99 = (beats: number): number | undefined =>
    stored.find((b) => b.settings?.window === beats && b.settings?.pitch === 'chromatic' && typeof b.percentiles?.p99 === 'number')?.percentiles.p99;
  return {
    earlyThresholds: stretchThresholds(lengths, p99, { margin: EARLY_MARGIN, fallback: EARLY_FALLBACK }),
    earlyUncalibrated: lengths.filter((l) => p99(l) === undefined),
  };
}

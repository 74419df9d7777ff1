/**
 * The measurements behind test/bench/RESULTS.md: how often each matching mode
 * catches a played copy, and how often it warns about unrelated material, on
 * the JSB chorale fixtures (test/fixtures/jsb/README.md: train 0–39 as the
 * corpus, 40–59 held out) and seeded random walks. Run with
 * `npm run build && node dist/test/bench/modes.js --calibrate`.
 *
 * @example
 *   const c = calibrate({ window: 16, hop: 8 }, { tolerances: [0, 0.1], tempoFreeTolerances: [0], copyStride: 2, grid: 0 });
 *   rate(c.modes[1].results[4], 0.5)   // → share of unrelated windows scoring ≥ 0.5 with tolerance 0.1
 */
import { type Note, type Point, toGrains, toPoints } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import type { WindowMatcher } from '../../core/match.js';
import type { MatchMode } from '../../core/pipeline.js';
import { LiveMatcher } from '../../core/live-match.js';
import { exactMatcher, matchCorpusOf } from '../helpers/matchers.js';
import { type WindowShape, windows } from '../../core/windows.js';
import { chorales, passage, played, randomWalk } from './material.js';

/** One kind of material scored by one mode: each window's best score, and its distinctiveness (0 when unmatched). */
export interface Measured {
  scores: number[];
  distinctiveness: number[];
}

export interface Material {
  name: string;
  /** True for copies of corpus passages (a warning is right), false for unrelated material (a warning is false). */
  copy: boolean;
  probes: Probe[];
}

export interface ModeResult {
  mode: string;
  /** Per material, in the order of `Calibration.materials`. */
  results: Measured[];
}

export interface Calibration {
  shape: WindowShape;
  grid: number;
  materials: { name: string; copy: boolean; windows: number }[];
  modes: ModeResult[];
}

export const rate = (m: Measured, threshold: number, minDistinct = 0): number =>
  m.scores.filter((s, i) => s >= threshold && m.distinctiveness[i] >= minDistinct).length / m.scores.length;

interface Probe {
  points: Point[];
  start: number;
}

const probesOf = (points: readonly Point[], shape: WindowShape): Probe[] => windows(points, shape).map((w) => ({ points: w.points, start: toGrains(w.start) }));

function measure(matcher: WindowMatcher, probes: readonly Probe[]): Measured {
  const results = probes.map((p) => matcher.best({ points: p.points, startGrains: p.start }));
  return { scores: results.map((m) => m?.score ?? 0), distinctiveness: results.map((m) => m?.distinctiveness ?? 0) };
}

export interface CalibrationOptions {
  /** Tolerances (beats) to measure without and with tempo-free matching. */
  tolerances: number[];
  tempoFreeTolerances: number[];
  /** Corpus chorales copied (every `copyStride`-th). */
  copyStride: number;
  /** Divisions per beat played onsets snap to before matching, as the live scorer does (0 = as played). */
  grid: number;
  /** Tolerances to measure the live path's matcher at (core/live-match.ts: the streaming index's candidates). */
  live?: number[];
}

/** Human timing of the unrelated material played, beats. */
export const PLAYED_JITTER = 0.06;

export function calibrate(shape: WindowShape, options: CalibrationOptions): Calibration {
  const { corpus, heldOut } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const snap = (notes: Note[]): Note[] => (options.grid > 0 ? notes.map((n) => ({ ...n, onset: Math.round(n.onset * options.grid) / options.grid })) : notes);
  // One played window of each chosen chorale from beat 8 on, placed at beat 1 so jitter keeps ontimes ≥ 0.
  const copyOf = (piece: number, p: { jitter?: number; drop?: number; scale?: number }): Probe => {
    const notes = snap(played(passage(corpus.pieces[piece].notes, 8, 8 + 2 * shape.window, 1), { ...p, seed: 500 + piece }));
    return { points: toPoints(notes).filter((q) => q.at < toGrains(1 + shape.window)), start: toGrains(1) };
  };
  const chosen = corpus.pieces.map((_, i) => i).filter((i) => i % options.copyStride === 0);
  const unrelated = [...heldOut.map((p) => p.notes), ...Array.from({ length: 10 }, (_, i) => randomWalk(64, 700 + i))];
  const materials: Material[] = [
    ...[0.03, 0.06, 0.1].map((jitter) => ({ name: `copies ±${jitter}`, copy: true, probes: chosen.map((i) => copyOf(i, { jitter, drop: 0.1 })) })),
    { name: 'copies 1.5× as long', copy: true, probes: chosen.map((i) => copyOf(i, { scale: 1.5 })) },
    { name: 'unrelated, as written', copy: false, probes: unrelated.flatMap((notes) => probesOf(toPoints(notes), shape)) },
    {
      name: `unrelated, played ±${PLAYED_JITTER}`,
      copy: false,
      probes: unrelated.flatMap((notes, i) => probesOf(toPoints(snap(played(notes, { jitter: PLAYED_JITTER, seed: 900 + i }))), shape)),
    },
  ];
  const matching = matchCorpusOf(view);
  const reference = (mode: MatchMode): WindowMatcher => exactMatcher(view, shape.window, { mode, distinctiveness: true });
  const modes: { mode: string; matcher: () => WindowMatcher }[] = [
    ...options.tolerances.map((tolerance) => ({ mode: tolerance === 0 ? 'exact' : `tolerance ${tolerance}`, matcher: () => reference({ tolerance, tempoFree: false }) })),
    ...options.tempoFreeTolerances.map((tolerance) => ({ mode: tolerance === 0 ? 'tempo-free' : `tempo-free, tolerance ${tolerance}`, matcher: () => reference({ tolerance, tempoFree: true }) })),
    ...(options.live ?? []).map((tolerance) => ({
      mode: `live (streaming index), ${tolerance === 0 ? 'exact' : `tolerance ${tolerance}`}`,
      // A fresh live matcher builds its votes from the window it is given: what the stream holds after playing it.
      matcher: (): WindowMatcher => ({ windowBeats: shape.window, best: (w) => new LiveMatcher(matching, { windowBeats: shape.window, mode: { tolerance, tempoFree: false } }).best(w) }),
    })),
  ];
  return {
    shape,
    grid: options.grid,
    materials: materials.map((m) => ({ name: m.name, copy: m.copy, windows: m.probes.length })),
    modes: modes.map((m) => {
      const matcher = m.matcher();
      return { mode: m.mode, results: materials.map((material) => measure(matcher, material.probes)) };
    }),
  };
}

const pct = (x: number): string => `${(100 * x).toFixed(1)}%`;

/**
 * A markdown table: per mode and threshold, the share of each material's
 * windows scoring at or above it — caught copies, or false warnings — and
 * the false warnings left when a minimum distinctiveness is also required.
 */
export function calibrationTables(c: Calibration, thresholds: readonly number[], minDistinct: readonly number[]): string {
  const falseOnes = c.materials.map((m, i) => ({ m, i })).filter(({ m }) => !m.copy);
  const heads = [...c.materials.map((m) => (m.copy ? `caught: ${m.name}` : `false: ${m.name}`)), ...minDistinct.flatMap((d) => falseOnes.map(({ m }) => `false: ${m.name}, distinctiveness ≥ ${d}`))];
  const lines = [
    `Window ${c.shape.window} beats, hop ${c.shape.hop}${c.grid > 0 ? `, played onsets snapped to 1/${c.grid} beat` : ''}; ` +
      c.materials.map((m) => `${m.windows} windows of ${m.name}`).join(', ') + '. Copies: 10% of notes dropped.',
    '',
    `| mode | threshold | ${heads.join(' | ')} |`,
    `| --- | --- | ${heads.map(() => '---').join(' | ')} |`,
  ];
  for (const { mode, results } of c.modes) {
    for (const t of thresholds) {
      const cells = [...results.map((r) => pct(rate(r, t))), ...minDistinct.flatMap((d) => falseOnes.map(({ i }) => pct(rate(results[i], t, d))))];
      lines.push(`| ${mode} | ${t} | ${cells.join(' | ')} |`);
    }
  }
  return lines.join('\n');
}

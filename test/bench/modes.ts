/**
 * What each matching mode costs with each candidate source, on the JSB
 * chorale fixtures (test/fixtures/jsb/README.md: train 0–39 as the corpus,
 * windows of 40–59): milliseconds per 16-beat window with distinctiveness,
 * as a report pays them, and the speed-up of the index's candidates over
 * every translation (the reference). `npm run bench` prints these rows; run
 * directly, `node dist/test/bench/modes.js [--calibrate]` prints them too,
 * and with --calibrate also the catch and false-warning tables of
 * test/bench/RESULTS.md.
 *
 * @example
 *   modeCostTable(jsbModeCosts())
 *   // | exact | index | 1.1 ms | 70.2× |  …one row per mode and source
 */
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import { toGrains, toPoints } from '../../core/note.js';
import { type CorpusPoints, corpusPoints } from '../../core/corpus.js';
import type { MatchWindow } from '../../core/match.js';
import { type CandidateKind, type MatchMode, windowMatcher } from '../../core/pipeline.js';
import { DEFAULT_WINDOW, windows } from '../../core/windows.js';
import { chorales } from '../helpers/material.js';
import { calibrate, calibrationTables } from '../helpers/calibration.js';
import { matchCorpusOf } from '../helpers/matchers.js';

export interface ModeCost {
  mode: string;
  candidates: CandidateKind;
  windows: number;
  msPerWindow: number;
  /** The reference's ms per window over this row's (1 for the reference itself). */
  speedup: number;
}

export const MODES: { mode: string; match: MatchMode }[] = [
  { mode: 'exact', match: { tolerance: 0, tempoFree: false } },
  { mode: 'tolerance 0.1', match: { tolerance: 0.1, tempoFree: false } },
  { mode: 'tempo-free', match: { tolerance: 0, tempoFree: true } },
  { mode: 'tempo-free, tolerance 0.1', match: { tolerance: 0.1, tempoFree: true } },
];

/** Times every mode with both candidate sources over the same windows, distinctiveness counted. */
export function modeCosts(view: CorpusPoints, probes: readonly MatchWindow[], windowBeats: number): ModeCost[] {
  const corpus = matchCorpusOf(view);
  corpus.fingerprints?.();
  return MODES.flatMap(({ mode, match }) => {
    const timed = (['every', 'index'] as const).map((candidates) => {
      const matcher = windowMatcher(corpus, { windowBeats, mode: match, candidates });
      const t0 = performance.now();
      for (const p of probes) matcher.best(p);
      return { mode, candidates, windows: probes.length, msPerWindow: (performance.now() - t0) / probes.length };
    });
    return timed.map((r) => ({ ...r, speedup: timed[0].msPerWindow / r.msPerWindow }));
  });
}

/** The rows on the JSB subset: `limit` windows of the held-out chorales against the 40 corpus chorales. */
export function jsbModeCosts(limit = 40): ModeCost[] {
  const { corpus, heldOut } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const probes = heldOut.flatMap((p) => windows(toPoints(p.notes), DEFAULT_WINDOW).map((w) => ({ points: w.points, startGrains: toGrains(w.start) }))).slice(0, limit);
  return modeCosts(view, probes, DEFAULT_WINDOW.window);
}

export function modeCostTable(rows: readonly ModeCost[]): string {
  return [
    '| mode | candidates | per window | speed-up over every translation |',
    '| --- | --- | --- | --- |',
    ...rows.map((r) => `| ${r.mode} | ${r.candidates} | ${r.msPerWindow.toFixed(2)} ms | ${r.speedup.toFixed(1)}× |`),
  ].join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  process.stdout.write(`Matching modes on the JSB subset (40 corpus chorales, 16-beat windows of held-out chorales):\n\n${modeCostTable(jsbModeCosts())}\n`);
  if (process.argv.includes('--calibrate')) {
    // The report's windows, then windows like the live presets' (jam: 16 beats, livecode: 8; both snap onsets to 1/12 beat).
    const setups = [
      { shape: DEFAULT_WINDOW, grid: 0, tolerances: [0, 0.025, 0.05, 0.075, 0.1, 0.15, 0.2], tempoFreeTolerances: [0, 0.1] },
      { shape: { window: 16, hop: 8 }, grid: 12, tolerances: [0, 0.05, 0.1, 0.15], tempoFreeTolerances: [0], live: [0, 0.1] },
      { shape: { window: 8, hop: 4 }, grid: 12, tolerances: [0, 0.05, 0.1, 0.15], tempoFreeTolerances: [0], live: [0, 0.1] },
    ];
    for (const { shape, ...options } of setups) {
      const c = calibrate(shape, { ...options, copyStride: 2 });
      process.stdout.write(`\n${calibrationTables(c, [0.4, 0.5, 0.6, 0.7], [0.5, 1])}\n`);
    }
  }
}

/**
 * What each matching mode costs beside the exact mode: setting up the
 * matcher, and milliseconds per 16-beat window, on the JSB chorale fixtures
 * (test/fixtures/jsb/README.md: train 0–39 as the corpus, windows of 40–59).
 * `npm run bench` prints these rows; run directly,
 * `node dist/test/bench/modes.js [--calibrate]` prints them too, and with
 * --calibrate also the catch and false-warning tables of test/bench/RESULTS.md.
 *
 * @example
 *   modeCostTable(jsbModeCosts())
 *   // | exact | 0 ms | 75.4 ms | 1.00× |  …one row a mode
 */
import { performance } from 'node:perf_hooks';
import { pathToFileURL } from 'node:url';
import { toGrains, toPoints } from '../../core/note.js';
import { type CorpusPoints, corpusPoints } from '../../core/corpus.js';
import { type WindowMatcher, exactMatcher } from '../../core/match.js';
import { type MatchMode, modeMatcher } from '../../core/match-mode.js';
import { DEFAULT_WINDOW, windows } from '../../core/windows.js';
import { type CorpusIndex, buildTriples, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { indexMatcher } from '../../core/index-match.js';
import { chorales } from '../helpers/material.js';
import { calibrate, calibrationTables } from '../helpers/calibration.js';

export interface ModeCost {
  mode: string;
  /** Building the matcher (fingerprint table, pitch lines), ms. */
  setupMs: number;
  windows: number;
  msPerWindow: number;
  /** msPerWindow / the exact mode's. */
  vsExact: number;
}

export interface Probe {
  points: { at: number; pitch: number }[];
  start: number;
}

const MODES: { mode: string; match: MatchMode | null }[] = [
  { mode: 'exact', match: null },
  { mode: 'exact + distinctiveness', match: { tolerance: 0, tempoFree: false } },
  { mode: 'tolerance 0.1 + distinctiveness', match: { tolerance: 0.1, tempoFree: false } },
  { mode: 'tempo-free + distinctiveness', match: { tolerance: 0, tempoFree: true } },
  { mode: 'tempo-free, tolerance 0.1 + distinctiveness', match: { tolerance: 0.1, tempoFree: true } },
];

/**
 * Times every mode over the same windows. `exact` is the exact-mode matcher
 * the other modes build on (the corpus index's, say); by default the
 * brute-force reference. With `index`, distinctiveness is counted through it.
 */
export function modeCosts(view: CorpusPoints, probes: readonly Probe[], windowBeats: number, exact: WindowMatcher = exactMatcher(view, windowBeats), index?: CorpusIndex): ModeCost[] {
  const rows: Omit<ModeCost, 'vsExact'>[] = MODES.map(({ mode, match }) => {
    const t0 = performance.now();
    const matcher = match ? modeMatcher(view, windowBeats, match, exact, index) : exact;
    const t1 = performance.now();
    for (const p of probes) matcher.best(p.points, p.start);
    const t2 = performance.now();
    return { mode, setupMs: t1 - t0, windows: probes.length, msPerWindow: (t2 - t1) / probes.length };
  });
  return rows.map((r) => ({ ...r, vsExact: r.msPerWindow / rows[0].msPerWindow }));
}

/**
 * The rows on the JSB subset: `limit` windows of the held-out chorales
 * against the 40 corpus chorales; `indexed`: on the corpus index (its exact
 * matcher, distinctiveness through it), else by brute force.
 */
export function jsbModeCosts(limit = 40, indexed = false): ModeCost[] {
  const { corpus, heldOut } = chorales();
  const view = corpusPoints(corpus, 'chromatic');
  const probes = heldOut.flatMap((p) => windows(toPoints(p.notes), DEFAULT_WINDOW).map((w) => ({ points: w.points, start: toGrains(w.start) }))).slice(0, limit);
  if (!indexed) return modeCosts(view, probes, DEFAULT_WINDOW.window);
  const index = corpusIndex(buildTriples(flattenPoints(view)));
  return modeCosts(view, probes, DEFAULT_WINDOW.window, indexMatcher(index, DEFAULT_WINDOW.window), index);
}

export function modeCostTable(rows: readonly ModeCost[]): string {
  return [
    '| mode | setup | per window | vs exact |',
    '| --- | --- | --- | --- |',
    ...rows.map((r) => `| ${r.mode} | ${r.setupMs.toFixed(0)} ms | ${r.msPerWindow.toFixed(1)} ms | ${r.vsExact.toFixed(2)}× |`),
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

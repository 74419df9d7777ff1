/**
 * The scoring worker thread: loads the corpus itself (so the main thread
 * never holds it or waits on it), then answers each `evaluate` with one
 * verdict. Runs from dist/ (started by scorer.ts).
 *
 * Messages in: { type: 'evaluate', reset, notes } | { type: 'reset' }.
 * Messages out: { type: 'ready', corpus } once loaded, or { type: 'failed', message };
 * then { type: 'verdict', verdict, elapsedMs } for each evaluate.
 *
 * @example
 *   new Worker(new URL('./scoring-worker.js', import.meta.url), { workerData: { corpus: 'presets/demo/corpus', windowBeats: 16, grid: 12 } });
 */
import { parentPort, workerData } from 'node:worker_threads';
import { performance } from 'node:perf_hooks';
import { openCorpus } from '../corpus/open-corpus.js';
import { idleCollector } from './idle-collect.js';
import { type LiveScorer, liveScorer } from './live-scorer.js';
import { type FromWorker, type ToWorker, type WorkerSetup, corpusSummary } from './scorer.js';

const setup = workerData as WorkerSetup;
const port = parentPort!;
const post = (m: FromWorker): void => port.postMessage(m);

let scorer: LiveScorer;
/** The verdict has gone: the scoring's garbage goes now, not during the next note's (idle-collect.ts). */
const collect = idleCollector();
try {
  // Every note read now: the index file may be rebuilt or deleted while the daemon listens (postings are read through the file held open).
  const opened = openCorpus(setup.corpus, { deferNotes: false, notify: (line) => post({ type: 'notice', line }) });
  const { corpus } = opened;
  const matching = opened.matchCorpus('chromatic');
  if (setup.tempoFree) matching.fingerprints?.();
  scorer = liveScorer(corpus, { windowBeats: setup.windowBeats, grid: setup.grid, tolerance: setup.tolerance, tempoFree: setup.tempoFree, early: setup.early }, matching);
  collect({ full: true });
  post({ type: 'ready', corpus: corpusSummary(opened) });
} catch (e) {
  post({ type: 'failed', message: (e as Error).message });
  process.exit(0);
}

port.on('message', (m: ToWorker) => {
  if (m.reset) scorer.reset();
  if (m.type === 'reset') return;
  const started = performance.now();
  for (const n of m.notes) scorer.add(n);
  post({ type: 'verdict', verdict: scorer.evaluate(), elapsedMs: performance.now() - started });
  collect();
});

/**
 * The scoring worker thread: loads the corpus itself (so the main thread
 * never holds it or waits on it), then answers each `evaluate` with one
 * verdict. Runs from dist/ (started by scorer.ts).
 *
 * Messages in: { type: 'evaluate', reset, notes } | { type: 'reset' }.
 * Messages out: { type: 'ready', corpus } once loaded, or { type: 'failed', message };
 * then { type: 'warmed', notes, ms, complete } once the warm-up (live-scorer.ts
 * `warmingUp`, run while no note has come) ends or the first note stops it,
 * { type: 'readAhead', pieces, ms } once every piece of a corpus opened
 * on demand has been read ahead (a few pieces a turn of the event loop, from
 * the start and between notes), and { type: 'verdict', verdict, elapsedMs }
 * for each evaluate.
 *
 * @example
 *   new Worker(new URL('./scoring-worker.js', import.meta.url), { workerData: { corpus: 'presets/demo/corpus', windowBeats: 16, grid: 12 } });
 */
import { parentPort, workerData } from 'node:worker_threads';
import { performance } from 'node:perf_hooks';
import { openCorpus } from '../corpus/open-corpus.js';
import { idleCollector } from './idle-collect.js';
import { type LiveMatching, type LiveScorer, liveScorer, warmingUp } from './live-scorer.js';
import { warmUpPassages } from '../../core/live-match.js';
import { readAhead } from '../../core/triple-index.js';
import { type FromWorker, type ToWorker, type WorkerSetup, corpusSummary } from './scorer.js';

const setup = workerData as WorkerSetup;
const port = parentPort!;
const post = (m: FromWorker): void => port.postMessage(m);

/** Pieces read ahead per turn of the event loop: about a millisecond's reading. */
const READ_AHEAD_PIECES = 16;

let scorer: LiveScorer;
let matching: LiveMatching;
let warming: Generator<number, void> | null = null;
/** The verdict has gone: the scoring's garbage goes now, not during the next note's (idle-collect.ts). */
const collect = idleCollector();
try {
  // An index written before the pieces' checksums were stored is read whole now: it may be rebuilt or deleted while the daemon listens. Any other is read through the file held open, a piece at a time.
  const opened = openCorpus(setup.corpus, { deferNotes: false, notify: (line) => post({ type: 'notice', line }) });
  const { corpus } = opened;
  matching = opened.matchCorpus('chromatic');
  if (setup.tempoFree) matching.fingerprints?.();
  scorer = liveScorer(corpus, { windowBeats: setup.windowBeats, grid: setup.grid, tolerance: setup.tolerance, tempoFree: setup.tempoFree, early: setup.early }, { ...matching, notesIn: opened.notesIn });
  collect({ full: true });
  warming = warmingUp(scorer, warmUpPassages(matching.flat));
  post({ type: 'ready', corpus: corpusSummary(opened) });
} catch (e) {
  post({ type: 'failed', message: (e as Error).message });
  process.exit(0);
}

// The warm-up, a note per turn of the event loop while no note has come: a note that comes waits for one warm-up note at most, and ends it.
const warmUpStarted = performance.now();
let warmedNotes = 0;
const stopWarming = (complete: boolean): void => {
  warming?.return();
  warming = null;
  post({ type: 'warmed', notes: warmedNotes, ms: performance.now() - warmUpStarted, complete });
};
const warmStep = (): void => {
  if (!warming) return;
  const step = warming.next();
  if (step.done) {
    stopWarming(true);
    collect({ full: true });
  } else {
    warmedNotes = step.value;
    collect();
    setImmediate(warmStep);
  }
};
setImmediate(warmStep);

// Every piece's points read ahead, a few pieces per turn of the event loop, from the start and between notes: a corpus opened on demand (bridge/formats/index-file.ts) is then all in memory a few seconds after the start, and a note waits for a few pieces at most.
const ahead = readAhead(matching.flat, READ_AHEAD_PIECES);
const aheadStep = (): void => {
  try {
    if (!ahead.next().done) setImmediate(aheadStep);
    else post({ type: 'readAhead', pieces: matching.flat.ensure ? matching.flat.offsets.length - 1 : 0, ms: performance.now() - warmUpStarted });
  } catch (e) {
    // A damaged piece: said once here; a note that touches it is refused as any read of it is.
    post({ type: 'notice', line: `reading the corpus ahead stopped: ${(e as Error).message}` });
  }
};
setImmediate(aheadStep);

port.on('message', (m: ToWorker) => {
  if (warming) stopWarming(false);
  if (m.reset) scorer.reset();
  if (m.type === 'reset') return;
  const started = performance.now();
  for (const n of m.notes) scorer.add(n);
  post({ type: 'verdict', verdict: scorer.evaluate(), elapsedMs: performance.now() - started });
  collect();
});

/**
 * The main thread's side of the scoring worker, and the coalescing rule:
 * at most one evaluation is in the worker and at most one waits. Notes that
 * arrive while the worker is busy join the waiting batch, which goes as one
 * evaluation when the worker answers; every note but the last of a batch
 * counts as `coalesced`. So input never waits for scoring, and scoring never
 * falls behind by more than one batch, however fast notes come.
 *
 * @example
 *   const { scorer, corpus } = await startScorer({ corpus: 'presets/demo/corpus', windowBeats: 16, grid: 12 }, (v, pass) => show(v, pass.scoringMs));
 *   scorer.submit({ seq: 1, onset: 0, duration: 1, pitch: 60, velocity: 90, channel: 1 });
 *   scorer.counters   // → { evaluations: 1, coalesced: 0, ... }
 */
import type { OpenedCorpus } from '../corpus/open-corpus.js';
import { Worker } from 'node:worker_threads';
import type { LiveNote, LiveVerdict } from './live-scorer.js';
import type { StretchRule } from '../../core/stretch.js';
import { UsageError } from '../formats/user-error.js';
import { exposeCollector } from './idle-collect.js';

export interface WorkerSetup {
  corpus: string;
  windowBeats: number;
  grid: number;
  /** Beats of played timing a match allows (0 = exact). */
  tolerance: number;
  /** Also match passages played at another tempo. */
  tempoFree: boolean;
  /** Recent stretches that may warn on their own (core/stretch.ts); absent = the whole window only. */
  early?: StretchRule;
}

export interface CorpusSummary {
  source: string;
  pieces: number;
  notes: number;
}

/** What a worker tells the daemon of the corpus it opened. */
export const corpusSummary = ({ source, corpus, notes }: Pick<OpenedCorpus, 'source' | 'corpus' | 'notes'>): CorpusSummary => ({ source, pieces: corpus.pieces.length, notes });

export type ToWorker = { type: 'evaluate'; reset: boolean; notes: LiveNote[] } | { type: 'reset'; reset: true };
export type FromWorker =
  | { type: 'ready'; corpus: CorpusSummary }
  | { type: 'failed'; message: string }
  /** Something the user should hear about while the corpus opens: a file skipped, an index not used. */
  | { type: 'notice'; line: string }
  | { type: 'warmed' } & WarmUp
  | { type: 'readAhead' } & ReadAhead
  | { type: 'verdict'; verdict: LiveVerdict; elapsedMs: number };

/** The worker's warm-up (live-scorer.ts `warmingUp`): notes played, how long it took, and whether it ran to the end or the first note stopped it. */
export interface WarmUp {
  notes: number;
  ms: number;
  complete: boolean;
}

/** The worker's reading of every piece ahead of need, done: the pieces read (0 for a corpus all in memory), and ms from the start. */
export interface ReadAhead {
  pieces: number;
  ms: number;
}

export interface ScorerCounters {
  evaluations: number;
  coalesced: number;
  /** Notes the window let go early because it was full. */
  dropped: number;
  /** Times the window started over because a note came a window or more behind the newest. */
  restarts: number;
  /** Worker time of the last evaluation, ms. */
  lastEvaluationMs: number | null;
  /** Null while the worker warms up. */
  warmUp: WarmUp | null;
  /** Null until the worker has read every piece ahead (at once for a corpus all in memory). */
  readAhead: ReadAhead | null;
  busy: boolean;
}

export interface Scorer {
  submit(note: LiveNote): void;
  reset(): void;
  readonly counters: ScorerCounters;
  close(): Promise<void>;
}

/** Where the worker's code is: beside this module once built (dist/bridge/daemon/). */
export const WORKER_URL = new URL('./scoring-worker.js', import.meta.url);

/** How a verdict came: `current` is false for one on notes from before the latest reset; `scoringMs` is the worker's time for it. */
export interface VerdictPass {
  current: boolean;
  scoringMs: number;
}

export async function startScorer(
  setup: WorkerSetup,
  onVerdict: (v: LiveVerdict, pass: VerdictPass) => void,
  options: { workerUrl?: URL; onCrash?: (message: string) => void; onNotice?: (line: string) => void } = {},
): Promise<{ scorer: Scorer; corpus: CorpusSummary }> {
  const counters: ScorerCounters = { evaluations: 0, coalesced: 0, dropped: 0, restarts: 0, lastEvaluationMs: null, warmUp: null, readAhead: null, busy: false };
  let waiting: LiveNote[] = [];
  let waitingReset = false;
  let closing = false;
  let worker: Worker;
  /** Resets so far, and the count when the evaluation in the worker was sent. */
  let resets = 0;
  let sentAt = 0;

  const send = (): void => {
    if (counters.busy) return;
    if (waiting.length === 0) {
      if (waitingReset) worker.postMessage({ type: 'reset', reset: true } satisfies ToWorker);
      waitingReset = false;
      return;
    }
    counters.coalesced += waiting.length - 1;
    worker.postMessage({ type: 'evaluate', reset: waitingReset, notes: waiting } satisfies ToWorker);
    counters.busy = true;
    sentAt = resets;
    waiting = [];
    waitingReset = false;
  };

  /** Starts a worker; resolves once it has the corpus. */
  const launch = (): Promise<CorpusSummary> =>
    new Promise((resolve, reject) => {
      let ready = false;
      counters.warmUp = null;
      counters.readAhead = null;
      // The worker collects its garbage between notes (idle-collect.ts).
      exposeCollector();
      worker = new Worker(options.workerUrl ?? WORKER_URL, { workerData: setup });
      worker.on('message', (m: FromWorker) => {
        if (m.type === 'ready') {
          ready = true;
          resolve(m.corpus);
        } else if (m.type === 'failed') reject(new UsageError(m.message));
        else if (m.type === 'notice') options.onNotice?.(m.line);
        else if (m.type === 'warmed') counters.warmUp = { notes: m.notes, ms: m.ms, complete: m.complete };
        else if (m.type === 'readAhead') counters.readAhead = { pieces: m.pieces, ms: m.ms };
        else {
          counters.busy = false;
          counters.evaluations++;
          counters.dropped = m.verdict.dropped;
          counters.restarts = m.verdict.restarts;
          counters.lastEvaluationMs = m.elapsedMs;
          onVerdict(m.verdict, { current: sentAt === resets, scoringMs: m.elapsedMs });
          send();
        }
      });
      worker.on('error', (e) => {
        if (!ready) return reject(e);
        // A bug in scoring must not stop the daemon: say so, start a fresh worker, carry on (the window starts empty).
        options.onCrash?.(e.message);
        counters.busy = false;
        if (!closing) void launch().then(send, (e2: Error) => options.onCrash?.(e2.message));
      });
    });

  const corpus = await launch();
  return {
    corpus,
    scorer: {
      counters,
      submit(note) {
        waiting.push(note);
        send();
      },
      reset() {
        // Notes still waiting belong to the passage that ended: they were logged, and are not scored.
        waiting = [];
        waitingReset = true;
        resets++;
        send();
      },
      async close() {
        closing = true;
        await worker.terminate();
      },
    },
  };
}

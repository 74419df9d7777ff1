/**
 * The daemon's reports: the main thread's side of the report worker
 * (report-worker.ts), which `POST /report` hands its files to.
 *
 * Why a worker of its own, and not the main thread in chunks: the main
 * thread stamps every incoming note with its arrival time and feeds the
 * live scorer, so a report scored there, even in slices, would delay notes
 * by a slice each; and the scoring worker must stay free for the live
 * window, which a report of many files would hold up for seconds. On a
 * second thread (the machines this runs on have at least two cores) a
 * report costs the live path nothing but memory.
 *
 * That memory is a second copy of the corpus, so the worker is started by
 * the first request, not with the daemon, and then kept: the corpus is
 * read once, not per request. It must be the corpus the daemon loaded:
 * when the index file was replaced or deleted before that first request
 * (index-watch.ts), or the corpus read now differs in pieces or notes from
 * the one being scored live, the request is refused, saying to restart.
 *
 * Jobs are answered in order, one at a time; past MAX_WAITING_REPORTS
 * waiting, a request is turned away at once rather than queued.
 *
 * @example
 *   const reports = reportService({ corpus: 'presets/demo/corpus', loaded: { source, pieces: 12, notes: 840 }, stale: () => null });
 *   await reports.run([{ name: 'take-3.mid', bytes }], options)   // → { kind: 'document', text: '{ "originality": 0.82, … }\n' }
 */
import { Worker } from 'node:worker_threads';
import type { Skipped } from '../corpus/corpus-files.js';
import type { ReportOptions } from '../corpus/report-settings.js';
import type { CorpusSummary } from './scorer.js';

export interface ReportWorkerSetup {
  corpus: string;
}

/** A query file as a request brought it. */
export interface UploadedFile {
  name: string;
  bytes: Uint8Array;
}

export type ToReportWorker = { id: number; files: UploadedFile[]; options: ReportOptions };
export type FromReportWorker =
  | { type: 'ready'; corpus: CorpusSummary }
  | { type: 'failed'; message: string }
  | { type: 'answer'; id: number; document: string }
  | { type: 'answer'; id: number; unreadable: { error: string; skipped: Skipped[] } };

export type ReportAnswer =
  /** The report document as `report --json` prints it. */
  | { kind: 'document'; text: string }
  /** None of the files could be read: why, file by file. */
  | { kind: 'unreadable'; error: string; skipped: Skipped[] }
  /** Reports cannot be made now: too many waiting, or not against the corpus the daemon loaded. */
  | { kind: 'busy' | 'unavailable'; error: string }
  /** The worker failed on this job (a bug): it is started afresh for the next. */
  | { kind: 'failed'; error: string };

export interface ReportService {
  run(files: UploadedFile[], options: ReportOptions): Promise<ReportAnswer>;
  /** Jobs sent and not yet answered. */
  waiting(): number;
  close(): Promise<void>;
}

export const MAX_WAITING_REPORTS = 4;
export const REPORT_WORKER_URL = new URL('./report-worker.js', import.meta.url);

export interface ReportServiceOptions {
  corpus: string;
  /** What the scoring worker loaded at start. */
  loaded: CorpusSummary;
  /** Why the corpus on disk is no longer the one loaded (the index replaced, say), or null. */
  stale(): string | null;
  workerUrl?: URL;
}

const restart = 'restart earwitness listen to report against the corpus as it is now';

export function reportService(options: ReportServiceOptions): ReportService {
  const pending = new Map<number, (a: ReportAnswer) => void>();
  let nextId = 1;
  let worker: Promise<Worker | string> | null = null;
  let closed = false;

  const settleAll = (a: ReportAnswer): void => {
    for (const answer of pending.values()) answer(a);
    pending.clear();
  };

  /** The worker with the corpus open, or why there is none. */
  const start = (): Promise<Worker | string> =>
    new Promise((resolve) => {
      const why = options.stale();
      if (why !== null) return resolve(`the corpus ${options.loaded.source} ${why} since the daemon started; ${restart}`);
      const w = new Worker(options.workerUrl ?? REPORT_WORKER_URL, { workerData: { corpus: options.corpus } satisfies ReportWorkerSetup });
      w.on('message', (m: FromReportWorker) => {
        if (m.type === 'failed') resolve(`the corpus ${options.loaded.source} could not be opened again (${m.message}); ${restart}`);
        else if (m.type === 'ready') {
          const { pieces, notes } = options.loaded;
          if (m.corpus.pieces === pieces && m.corpus.notes === notes) return resolve(w);
          void w.terminate();
          resolve(`the corpus ${options.loaded.source} now holds ${m.corpus.pieces} pieces, ${m.corpus.notes} notes, not the ${pieces} pieces, ${notes} notes loaded at start; ${restart}`);
        } else {
          const answer = pending.get(m.id);
          pending.delete(m.id);
          answer?.('document' in m ? { kind: 'document', text: m.document } : { kind: 'unreadable', ...m.unreadable });
        }
      });
      w.on('error', (e) => {
        // A bug in reporting must not stop the daemon: the waiting jobs fail, the next starts a fresh worker.
        worker = null;
        resolve(`the report worker failed (${e.message})`);
        settleAll({ kind: 'failed', error: `the report worker failed (${e.message}); try again` });
      });
    });

  return {
    async run(files, reportOptions) {
      if (closed) return { kind: 'unavailable', error: 'earwitness is stopping' };
      if (pending.size >= MAX_WAITING_REPORTS) return { kind: 'busy', error: `${pending.size} reports are already waiting; send this one again when one is answered` };
      const id = nextId++;
      const answered = new Promise<ReportAnswer>((resolve) => pending.set(id, resolve));
      const w = await (worker ??= start());
      if (typeof w === 'string') {
        pending.delete(id);
        return { kind: 'unavailable', error: w };
      }
      w.postMessage({ id, files, options: reportOptions } satisfies ToReportWorker);
      return answered;
    },
    waiting: () => pending.size,
    async close() {
      closed = true;
      settleAll({ kind: 'unavailable', error: 'earwitness is stopping' });
      const w = await worker;
      if (w && typeof w !== 'string') await w.terminate();
    },
  };
}

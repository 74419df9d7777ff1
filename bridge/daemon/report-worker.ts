/**
 * The report worker thread: opens the daemon's corpus once, then answers
 * each job — query files as bytes and the report's settings — with the
 * document `earwitness report --json` prints for the same files
 * (bridge/corpus/report-document.ts), as text, or with why none of the
 * files could be read. Jobs are answered one at a time, in order. Runs
 * from dist/ (started by reports.ts).
 *
 * @example
 *   const w = new Worker(new URL('./report-worker.js', import.meta.url), { workerData: { corpus: 'presets/demo/corpus' } });
 *   w.postMessage({ id: 1, files: [{ name: 'take-3.mid', bytes }], options });
 *   // ← { type: 'ready', corpus }, then { type: 'answer', id: 1, document: '{ "originality": 0.82, … }' }
 */
import { parentPort, workerData } from 'node:worker_threads';
import { openCorpus } from '../corpus/open-corpus.js';
import { loadQueryBytes } from '../corpus/corpus-files.js';
import { documentText, readableQueries, reportDocument, scoreQueries } from '../corpus/report-document.js';
import { UsageError } from '../formats/user-error.js';
import type { FromReportWorker, ReportWorkerSetup, ToReportWorker } from './reports.js';
import { corpusSummary } from './scorer.js';

const setup = workerData as ReportWorkerSetup;
const port = parentPort!;
const post = (m: FromReportWorker): void => port.postMessage(m);

let opened: ReturnType<typeof openCorpus>;
try {
  // Every note read now, as the scoring worker does: the index file may be rebuilt or deleted while the daemon listens (postings are read through the file held open).
  // Notices (a file skipped) are the scoring worker's to tell; they would only repeat here.
  opened = openCorpus(setup.corpus, { deferNotes: false });
  post({ type: 'ready', corpus: corpusSummary(opened) });
} catch (e) {
  post({ type: 'failed', message: (e as Error).message });
  process.exit(0);
}

port.on('message', (job: ToReportWorker) => {
  const read = loadQueryBytes(job.files);
  try {
    readableQueries(read, job.files.map((f) => f.name));
  } catch (e) {
    if (!(e instanceof UsageError)) throw e;
    return post({ type: 'answer', id: job.id, unreadable: { error: e.message, skipped: read.skipped } });
  }
  const { report } = scoreQueries(opened, read.queries, job.options);
  post({ type: 'answer', id: job.id, document: documentText(reportDocument(report, job.options, read.skipped)) });
});

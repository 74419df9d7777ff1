/**
 * The thread a streaming build (bridge/formats/index-build.ts) gives each
 * pitch dimension's tables, so the two are sorted and written on two cores
 * at once: it writes the job in its workerData (bridge/formats/pitch-tables.ts)
 * and posts `{ progress: records }` as parts are written, then
 * `{ written }`, or `{ error }` with the failure's message.
 *
 * @example
 *   const w = new Worker(new URL('./pitch-tables-worker.js', import.meta.url), { workerData: job });
 *   w.on('message', (m) => m.written && …);
 */
import { parentPort, workerData } from 'node:worker_threads';
import { type TablesJob, writeTables } from './pitch-tables.js';

try {
  const written = writeTables(workerData as TablesJob, (records) => parentPort!.postMessage({ progress: records }));
  parentPort!.postMessage({ written });
} catch (e) {
  parentPort!.postMessage({ error: (e as Error).message });
}

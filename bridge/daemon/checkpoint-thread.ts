/**
 * The thread of log-checkpoints.ts: its own connection to the session log,
 * a passive checkpoint every `everyMs`, a last one when told to stop. A
 * failure goes to the daemon as one message, the first time only (a full
 * disk stays full for a while). Runs from dist/ (started by log-checkpoints.ts).
 *
 * @example
 *   new Worker(CHECKPOINT_THREAD_URL, { workerData: { file: 'sessions.db', everyMs: 2000 } });
 */
import { parentPort, workerData } from 'node:worker_threads';
import { checkpointConnection } from '../formats/session-log.js';
import type { CheckpointSetup } from './log-checkpoints.js';

const { file, everyMs } = workerData as CheckpointSetup;
const port = parentPort!;
const log = checkpointConnection(file);
let failed = false;
const checkpoint = (): void => {
  try {
    log.checkpoint();
  } catch (e) {
    if (!failed) port.postMessage((e as Error).message);
    failed = true;
  }
};
const timer = setInterval(checkpoint, everyMs);
port.on('message', () => {
  clearInterval(timer);
  checkpoint();
  log.close();
  port.close();
});

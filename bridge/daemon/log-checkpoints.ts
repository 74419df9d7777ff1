/**
 * The session log's checkpoints, on a thread of their own. In WAL mode
 * SQLite appends each commit to the log's `-wal` file and, left to itself,
 * copies that back into the database — a checkpoint, which waits for the
 * disk — from whichever commit crosses 1,000 pages: every few hundred notes,
 * one note's write held up the thread that sends scores for as long as the
 * disk took. The daemon opens its log with `checkpointsElsewhere` and a
 * thread (checkpoint-thread.ts) runs a passive checkpoint every `everyMs`:
 * it never waits for the writer, and the writer never waits for it. The
 * last connection to close checkpoints whatever is left.
 *
 * @example
 *   const log = SessionLog.open(file, { checkpointsElsewhere: true });
 *   const checkpoints = startCheckpoints(file, { onFailure: (m) => notice(m) });
 *   …
 *   await checkpoints.close();
 *   log.close();
 */
import { Worker } from 'node:worker_threads';

/** How often the log's write-ahead file is copied back into it. */
export const CHECKPOINT_EVERY_MS = 2000;

/** Where the thread's code is: beside this module once built (dist/bridge/daemon/). */
export const CHECKPOINT_THREAD_URL = new URL('./checkpoint-thread.js', import.meta.url);

export interface CheckpointSetup {
  file: string;
  everyMs: number;
}

export interface Checkpoints {
  /** Stops the thread after a last checkpoint. */
  close(): Promise<void>;
}

/** Starts the thread; a checkpoint that fails is told once through `onFailure` (commits still reach the `-wal` file). */
export function startCheckpoints(file: string, options: { everyMs?: number; onFailure?: (message: string) => void; threadUrl?: URL } = {}): Checkpoints {
  const thread = new Worker(options.threadUrl ?? CHECKPOINT_THREAD_URL, { workerData: { file, everyMs: options.everyMs ?? CHECKPOINT_EVERY_MS } satisfies CheckpointSetup });
  thread.on('message', (message: string) => options.onFailure?.(message));
  thread.on('error', (e) => options.onFailure?.(e.message));
  const exited = new Promise<void>((resolve) => thread.once('exit', () => resolve()));
  return {
    close() {
      thread.postMessage('stop');
      return exited;
    },
  };
}

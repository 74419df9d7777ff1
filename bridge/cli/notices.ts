/**
 * Where notices reach the user: stderr, one line each. Loaders and the
 * daemon only report them (a callback, a return value); commands print them
 * through here. `--corpus` as a command opens it: a progress bar while a
 * folder is read file by file, and each file skipped or index not used told
 * as one `earwitness: …` line, in the order they happen.
 *
 * @example
 *   const opened = openCorpusTold('songs', { pitch: 'chromatic' });
 *   // stderr: earwitness: skipped broken.mid: not a Standard MIDI File
 *   startDaemon({ ..., notice: printNotice });
 */
import { type OpenOptions, type OpenedCorpus, openCorpus } from '../corpus/open-corpus.js';
import { progressBar } from './progress.js';

/** A line already worded as the user sees it (the daemon's notices start with `earwitness:`). */
export const printNotice = (line: string): void => void process.stderr.write(`${line}\n`);

/** One notice on stderr, as every command prints them. */
export const tell = (line: string): void => printNotice(`earwitness: ${line}`);

export function openCorpusTold(path: string, options: Omit<OpenOptions, 'progress' | 'notify'> = {}): OpenedCorpus {
  const bar = progressBar('reading corpus');
  try {
    return openCorpus(path, {
      ...options,
      progress: bar.tick,
      notify: (line) => {
        bar.stop();
        tell(line);
      },
    });
  } finally {
    bar.stop();
  }
}

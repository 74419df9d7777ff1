/** Progress on stderr for long work, shown only when stderr is a terminal so logs and pipes stay clean. */
import cliProgress from 'cli-progress';

export type ProgressFn = (done: number, total: number) => void;

export function progressBar(label: string): { tick: ProgressFn; stop: () => void } {
  if (!process.stderr.isTTY) return { tick: () => {}, stop: () => {} };
  const bar = new cliProgress.SingleBar(
    { format: `${label} [{bar}] {value}/{total} {eta_formatted} left`, stream: process.stderr, hideCursor: true, clearOnComplete: true },
    cliProgress.Presets.shades_classic,
  );
  let started = false;
  return {
    tick: (done, total) => {
      if (!started) {
        bar.start(total, 0);
        started = true;
      }
      bar.update(done);
    },
    stop: () => {
      if (started) bar.stop();
      started = false;
    },
  };
}

/**
 * One folder for everything temporary a run makes — the run's own files,
 * the daemons' and browsers' it starts — removed when the run ends.
 * `os.tmpdir()` reads TMPDIR each time it is called, and test workers and
 * child processes inherit it. The default export is Vitest's global setup.
 *
 * @example
 *   const temp = tempRoot('bench-live');
 *   temp.root     // → '/tmp/earwitness-bench-live-Ab12Cd', and tmpdir() now returns it
 *   temp.remove(); // the folder and all in it gone, TMPDIR as it was
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** A new folder in the temporary folder, its name starting `earwitness-LABEL-`. */
export const tempDir = (label: string): string => mkdtempSync(join(tmpdir(), `earwitness-${label}-`));

export function tempRoot(label: string): { root: string; remove: () => void } {
  const before = process.env.TMPDIR;
  const root = tempDir(label);
  process.env.TMPDIR = root;
  return {
    root,
    remove() {
      if (before === undefined) delete process.env.TMPDIR;
      else process.env.TMPDIR = before;
      rmSync(root, { recursive: true, force: true });
    },
  };
}

/** Vitest's global setup (vitest.config.ts): a test run's folder, removed at its end. */
export default function setup(): () => void {
  return tempRoot('tests').remove;
}

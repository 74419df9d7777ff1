/**
 * Vitest's global setup: every temporary folder of a test run — the tests'
 * own, the daemons' and browsers' they start — goes in one folder, removed
 * when the run ends. `os.tmpdir()` reads TMPDIR each time it is called, and
 * the test workers and the processes they start inherit it.
 *
 * @example
 *   // vitest.config.ts
 *   test: { globalSetup: ['test/helpers/temp-root.ts'] }
 *   // in a test: tmpdir()   // → '/tmp/earwitness-tests-Ab12Cd'
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export default function setup(): () => void {
  const root = mkdtempSync(join(tmpdir(), 'earwitness-tests-'));
  process.env.TMPDIR = root;
  return () => rmSync(root, { recursive: true, force: true });
}

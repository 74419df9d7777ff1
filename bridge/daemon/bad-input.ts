/**
 * Bad input, counted by kind for /health and shown once per kind on
 * stderr: a misbehaving sender must neither stop the daemon nor bury its
 * log in thousands of identical lines.
 *
 * @example
 *   const bad = badInputLog((line) => process.stderr.write(line + '\n'));
 *   bad.record('OSC', { kind: 'pitch', detail: '/ew/note: pitch 200 is outside 0–127' });
 *   bad.counts   // → { pitch: 1 }
 */
import type { BadInput } from './input.js';

export function badInputLog(write: (line: string) => void): { counts: Record<string, number>; record(source: string, bad: BadInput): void } {
  const counts: Record<string, number> = {};
  return {
    counts,
    record(source, bad) {
      counts[bad.kind] = (counts[bad.kind] ?? 0) + 1;
      if (counts[bad.kind] === 1) write(`earwitness: ignored bad ${source} input (${bad.kind}): ${bad.detail}; more of this kind is counted in /health, not shown`);
    },
  };
}

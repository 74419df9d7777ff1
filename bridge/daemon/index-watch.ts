/**
 * The corpus index file the daemon opened, watched while it runs. The
 * scoring worker holds the copy it loaded in memory and never reads the
 * file again, so rebuilding or deleting the index mid-set changes nothing
 * on stage — and the performer is told so, one line a change, and /health
 * says what is on disk. (Polling stat: it works the same on every file
 * system, and a second is soon enough for a notice.)
 *
 * @example
 *   const watch = watchIndexFile({ source: 'songs/.earwitness-index', pieces: 120, notes: 81234 }, notice);
 *   // … the file is rebuilt …  notice: "earwitness: the corpus index songs/.earwitness-index was replaced while listening; …"
 *   watch.onDisk()   // → 'replaced'
 *   watch.close();
 */
import { type Stats, statSync, unwatchFile, watchFile } from 'node:fs';
import type { CorpusSummary } from './scorer.js';

export type OnDisk = 'as loaded' | 'replaced' | 'deleted';

export interface IndexWatch {
  /** The index file watched, or null when the corpus was read from its MIDI files. */
  file: string | null;
  onDisk(): OnDisk;
  close(): void;
}

export const WATCH_INTERVAL_MS = 1000;

export function watchIndexFile(corpus: CorpusSummary, notice: (line: string) => void, intervalMs = WATCH_INTERVAL_MS): IndexWatch {
  let file: string | null = corpus.source;
  try {
    if (!statSync(file).isFile()) file = null;
  } catch {
    file = null;
  }
  let state: OnDisk = 'as loaded';
  if (file === null) return { file, onDisk: () => state, close: () => {} };
  const watched = file;
  const changed = (now: Stats): void => {
    // fs.watchFile reports a missing file as a Stats of zeros.
    state = now.ino === 0 && now.mtimeMs === 0 ? 'deleted' : 'replaced';
    const loaded = `${corpus.pieces} pieces, ${corpus.notes} notes`;
    notice(`earwitness: the corpus index ${watched} was ${state} while listening; still scoring with the copy loaded at start (${loaded}); restart earwitness listen to load ${state === 'deleted' ? 'a rebuilt one' : 'the new one'}`);
  };
  watchFile(watched, { interval: intervalMs, persistent: false }, changed);
  return { file, onDisk: () => state, close: () => unwatchFile(watched, changed) };
}

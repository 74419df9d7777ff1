/**
 * `--corpus PATH`: a folder of MIDI files, loaded and spelled, ready for a
 * pitch dimension and a matcher.
 */
import { statSync } from 'node:fs';
import type { Corpus } from '../core/corpus.js';
import { type Skipped, loadCorpusFolder } from './corpus-files.js';
import { progressBar } from './progress.js';
import { UsageError } from './usage.js';

export interface OpenedCorpus {
  source: string;
  corpus: Corpus;
  skipped: Skipped[];
}

export function openCorpus(path: string, options: { percussion?: boolean } = {}): OpenedCorpus {
  let isDir = false;
  try {
    isDir = statSync(path).isDirectory();
  } catch {
    throw new UsageError(`--corpus ${path}: no such folder`);
  }
  if (!isDir) throw new UsageError(`--corpus ${path}: not a folder of MIDI files`);
  const bar = progressBar('reading corpus');
  const { corpus, skipped } = loadCorpusFolder(path, { percussion: options.percussion, progress: bar.tick });
  bar.stop();
  for (const s of skipped) process.stderr.write(`earwitness: skipped ${s.file}: ${s.error}\n`);
  if (corpus.pieces.length === 0) throw new UsageError(`--corpus ${path}: holds no readable MIDI file with notes`);
  return { source: path, corpus, skipped };
}

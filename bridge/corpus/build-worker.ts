/**
 * A worker thread of `corpus build`: reads one MIDI file per message and
 * answers with its piece, notes flattened into transferable typed arrays (no
 * copying of millions of note objects between threads), and the SHA-256 of
 * its bytes for the next rebuild. A file that cannot be read is answered with
 * its reason; the main thread ends a worker that takes too long.
 *
 * @example
 *   const w = new Worker(new URL('./build-worker.js', import.meta.url));
 *   w.postMessage({ file: '/songs/a.mid', root: '/songs', percussion: false });
 *   w.once('message', (r: ParsedFile) => r.piece?.path)   // → 'a.mid'
 */
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { parentPort } from 'node:worker_threads';
import { type FlatNotes, flattenNotes } from '../../core/flat-notes.js';
import { readPiece } from './corpus-files.js';
import type { PieceInfo } from '../formats/index-file.js';
import { MAX_MIDI_BYTES, MidiFileError } from '../formats/midi-file.js';

export interface ParseTask {
  file: string;
  root: string;
  percussion: boolean;
}

export interface ParsedFile {
  file: string;
  /** Null for a file over the size limit, which is not read at all. */
  sha256: string | null;
  piece: (PieceInfo & { notes: FlatNotes }) | null;
  error: string | null;
}

/** SHA-256 of a file's bytes, or null when it is over the MIDI size limit (it will be skipped unread). */
export function fileHash(file: string): string | null {
  if (statSync(file).size > MAX_MIDI_BYTES) return null;
  return createHash('sha256').update(readFileSync(file)).digest('hex');
}

function parse(task: ParseTask): { message: ParsedFile; transfer: ArrayBuffer[] } {
  let sha256: string | null = null;
  try {
    sha256 = fileHash(task.file);
    const { notes, ...info } = readPiece(task.file, task.root, { percussion: task.percussion });
    if (notes.length === 0) return { message: { file: task.file, sha256, piece: null, error: 'holds no notes' }, transfer: [] };
    const flat = flattenNotes([{ path: info.path, notes }]);
    const transfer = Object.values(flat).map((a: Uint8Array) => a.buffer as ArrayBuffer);
    return { message: { file: task.file, sha256, piece: { ...info, notes: flat }, error: null }, transfer };
  } catch (e) {
    const error = e instanceof MidiFileError ? e.reason : (e as Error).message;
    return { message: { file: task.file, sha256, piece: null, error }, transfer: [] };
  }
}

parentPort?.on('message', (task: ParseTask) => {
  const { message, transfer } = parse(task);
  parentPort!.postMessage(message, transfer);
});

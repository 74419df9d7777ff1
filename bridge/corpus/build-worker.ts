/**
 * A worker thread of `corpus build`: reads one score file per message and
 * answers with its pieces (one, or a tune book's tunes), notes flattened into transferable typed arrays (no
 * copying of millions of note objects between threads), and the SHA-256 of
 * its bytes for the next rebuild. A file that cannot be read is answered with
 * its reason; the main thread ends a worker that takes too long.
 *
 * @example
 *   const w = new Worker(new URL('./build-worker.js', import.meta.url));
 *   w.postMessage({ file: '/songs/a.mid', root: '/songs', percussion: false });
 *   w.once('message', (r: ParsedFile) => r.pieces[0]?.path)   // → 'a.mid'
 */
import { createHash } from 'node:crypto';
import { readFileSync, statSync } from 'node:fs';
import { parentPort } from 'node:worker_threads';
import { getHeapStatistics } from 'node:v8';
import { type FlatNotes, flattenNotes } from '../../core/flat-notes.js';
import { type Skipped, readPieces } from './corpus-files.js';
import type { PieceInfo } from '../formats/index-file.js';
import { MAX_MIDI_BYTES } from '../formats/midi-file.js';
import { unreadableReason } from '../formats/read-file.js';

export interface ParseTask {
  file: string;
  root: string;
  percussion: boolean;
}

export interface ParsedFile {
  file: string;
  /** Null for a file over the size limit, which is not read at all. */
  sha256: string | null;
  /** The file's pieces with notes, in order, and their notes (piece i of the file is piece i of `notes`); none when `error`. */
  pieces: PieceInfo[];
  notes: FlatNotes | null;
  /** Pieces of the file that could not be read or hold no notes, while others could. */
  skipped: Skipped[];
  error: string | null;
}

/** SHA-256 of a file's bytes, or null when it is over the size limit (it will be skipped unread). */
export function fileHash(file: string): string | null {
  if (statSync(file).size > MAX_MIDI_BYTES) return null;
  return createHash('sha256').update(readFileSync(file)).digest('hex');
}

function parse(task: ParseTask): { message: ParsedFile; transfer: ArrayBuffer[] } {
  let sha256: string | null = null;
  const unread = (error: string): { message: ParsedFile; transfer: ArrayBuffer[] } => ({ message: { file: task.file, sha256, pieces: [], notes: null, skipped: [], error }, transfer: [] });
  try {
    sha256 = fileHash(task.file);
    const read = readPieces(task.file, task.root, { percussion: task.percussion });
    const withNotes = read.pieces.filter((p) => p.notes.length > 0);
    const skipped = [...read.pieces.filter((p) => p.notes.length === 0).map((p) => ({ file: p.path, error: 'holds no notes' })), ...read.skipped];
    if (withNotes.length === 0) return unread(read.pieces.length + read.skipped.length > 1 ? `holds no tune with notes (${skipped.map((s) => `${s.file}: ${s.error}`).join('; ')})` : (skipped[0]?.error ?? 'holds no notes'));
    const flat = flattenNotes(withNotes);
    const transfer = Object.values(flat).map((a: Uint8Array) => a.buffer as ArrayBuffer);
    const pieces = withNotes.map(({ notes: _, ...info }) => info);
    return { message: { file: task.file, sha256, pieces, notes: flat, skipped, error: null }, transfer };
  } catch (e) {
    return unread(unreadableReason(e));
  }
}

/**
 * Heap used since the last full collection past which the next one is made.
 * Reading a file makes many short-lived objects; left to itself the engine
 * lets them pile up, and after a few thousand files each one read several
 * times slower (test/bench/RESULTS.md). A full collection between files,
 * every so often, keeps the pace steady. The engine's collector is there
 * when `corpus build` started this thread after exposing it
 * (bridge/daemon/idle-collect.ts); without it, nothing is collected here.
 */
export const COLLECT_AFTER_BYTES = 64 * 2 ** 20;

const collect = (globalThis as { gc?: () => void }).gc;
let collectedAt = getHeapStatistics().used_heap_size;

parentPort?.on('message', (task: ParseTask) => {
  const { message, transfer } = parse(task);
  parentPort!.postMessage(message, transfer);
  if (collect && getHeapStatistics().used_heap_size - collectedAt > COLLECT_AFTER_BYTES) {
    collect();
    collectedAt = getHeapStatistics().used_heap_size;
  }
});

/**
 * Writing a corpus as K shards: the pieces cut into K runs of consecutive
 * pieces with similar note counts (core/shards.ts dealRuns), each run an
 * index file of its own that knows which shard of which build it is, and the
 * manifest naming them (bridge/formats/shard-manifest.ts). The runs keep the
 * corpus's piece order, so shards merged answer as the one index would.
 *
 * @example
 *   writeShards({ manifest: 'songs/.earwitness-shards.json', name: 'songs', shards: 3, notes, pieces, files, percussion: false })
 *   // → { manifest: 'songs/.earwitness-shards.json', shards: [{ path: 'songs/.earwitness-shard-1-of-3', pieces: 40, notes: 27001 }, …] }
 */
import { randomBytes } from 'node:crypto';
import { basename, dirname, join } from 'node:path';
import { PITCH_MODES } from '../../core/note.js';
import { type FlatNotes, joinNotes, notePoints } from '../../core/flat-notes.js';
import { CORPUS_TRIPLES, buildTriples } from '../../core/triple-index.js';
import { FINGERPRINT_SHAPE, buildFingerprints } from '../../core/fingerprint.js';
import { dealRuns } from '../../core/shards.js';
import { type FileFingerprint, type IndexToWrite, type PieceInfo, type ShardOf, readIndexCrc, writeIndexFile } from '../formats/index-file.js';
import { type ShardEntry, MANIFEST_FORMAT, MANIFEST_VERSION, shardFileName, writeShardManifest } from '../formats/shard-manifest.js';

export interface IndexParts {
  notes: FlatNotes;
  pieces: PieceInfo[];
  files: FileFingerprint[];
  percussion: boolean;
  shard?: ShardOf;
}

/**
 * Everything an index file holds for these pieces: each pitch dimension's
 * triple postings and fingerprint table, each made from the notes when the
 * writer reaches it (writeIndexFile), so a build holds one at a time.
 */
export function indexContents(parts: IndexParts): IndexToWrite {
  const postings = Object.fromEntries(PITCH_MODES.map((mode) => [mode, () => buildTriples(notePoints(parts.notes, mode), CORPUS_TRIPLES)]));
  const fingerprints = Object.fromEntries(PITCH_MODES.map((mode) => [mode, () => buildFingerprints(notePoints(parts.notes, mode), FINGERPRINT_SHAPE)]));
  return { shape: CORPUS_TRIPLES, fingerprint: FINGERPRINT_SHAPE, ...parts, postings, fingerprints };
}

export interface ShardsRequest extends Omit<IndexParts, 'shard'> {
  /** The manifest file; the shards are written beside it. */
  manifest: string;
  /** What the queues are named after. */
  name: string;
  shards: number;
}

export interface ShardsSummary {
  manifest: string;
  shards: { path: string; pieces: number; notes: number }[];
}

/** The file a piece came from: its path, less `#id` for one of a tune book's tunes. */
const fileOf = (path: string, known: ReadonlySet<string>): string => (known.has(path) ? path : path.slice(0, path.lastIndexOf('#')));

/** The queue name's characters: a folder's name with anything else made `_`. */
const queueName = (name: string): string => name.replace(/[^A-Za-z0-9_.-]/g, '_').slice(0, 64) || 'corpus';

/** Writes the shards and their manifest. Files skipped whole are listed in the first shard; each other file in the shards holding its pieces. */
export function writeShards(request: ShardsRequest): ShardsSummary {
  const build = randomBytes(8).toString('hex');
  const name = queueName(request.name);
  const counts = request.pieces.map((_, p) => request.notes.offsets[p + 1] - request.notes.offsets[p]);
  const runs = dealRuns(counts, request.shards);
  const known = new Set(request.files.map((f) => f.path));
  const entries: ShardEntry[] = runs.map((run, k) => {
    const path = join(dirname(request.manifest), shardFileName(k + 1, runs.length));
    const range = Array.from({ length: run.pieces }, (_, i) => run.first + i);
    const pieces = range.map((p) => request.pieces[p]);
    const holds = new Set(pieces.map((p) => fileOf(p.path, known)));
    const files = request.files.filter((f) => holds.has(f.path) || (k === 0 && f.error !== null));
    const notes = joinNotes(range.map((piece) => ({ notes: request.notes, piece })));
    const contents = indexContents({ notes, pieces, files, percussion: request.percussion, shard: { build, name, number: k + 1, of: runs.length, firstPiece: run.first } });
    writeIndexFile(path, contents);
    const points = Object.fromEntries(PITCH_MODES.map((mode) => [mode, notePoints(notes, mode).at.length])) as ShardEntry['points'];
    return { path: basename(path), firstPiece: run.first, pieces: run.pieces, notes: notes.at.length, points, crc: readIndexCrc(path) };
  });
  writeShardManifest(request.manifest, { format: MANIFEST_FORMAT, version: MANIFEST_VERSION, build, name, percussion: request.percussion, shards: entries });
  return { manifest: request.manifest, shards: entries.map((e) => ({ path: join(dirname(request.manifest), e.path), pieces: e.pieces, notes: e.notes })) };
}

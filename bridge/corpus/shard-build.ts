/**
 * Writing a corpus as K shards: the pieces cut into K runs of consecutive
 * pieces with similar note counts (core/shards.ts dealRuns), each run an
 * index file of its own that knows which shard of which build it is, and the
 * manifest naming them (bridge/formats/shard-manifest.ts). The runs keep the
 * corpus's piece order, so shards merged answer as the one index would.
 *
 * @example
 *   await writeShards({ manifest: 'songs/.earwitness-shards.json', name: 'songs', shards: 3, notes, pieces, files, percussion: false })
 *   // → { manifest: 'songs/.earwitness-shards.json', shards: [{ path: 'songs/.earwitness-shard-1-of-3', pieces: 40, notes: 27001 }, …] }
 */
import { randomBytes } from 'node:crypto';
import { basename, dirname, join } from 'node:path';
import { type FlatNotes, joinNotes } from '../../core/flat-notes.js';
import { dealRuns } from '../../core/shards.js';
import { type FileFingerprint, type PieceInfo, readIndexCrc } from '../formats/index-file.js';
import { buildIndexFile } from '../formats/index-build.js';
import { type ShardEntry, MANIFEST_FORMAT, MANIFEST_VERSION, shardFileName, writeShardManifest } from '../formats/shard-manifest.js';

export interface ShardsRequest {
  notes: FlatNotes;
  pieces: PieceInfo[];
  files: FileFingerprint[];
  percussion: boolean;
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
export async function writeShards(request: ShardsRequest): Promise<ShardsSummary> {
  const build = randomBytes(8).toString('hex');
  const name = queueName(request.name);
  const counts = request.pieces.map((_, p) => request.notes.offsets[p + 1] - request.notes.offsets[p]);
  const runs = dealRuns(counts, request.shards);
  const known = new Set(request.files.map((f) => f.path));
  const entries: ShardEntry[] = [];
  for (const [k, run] of runs.entries()) {
    const path = join(dirname(request.manifest), shardFileName(k + 1, runs.length));
    const range = Array.from({ length: run.pieces }, (_, i) => run.first + i);
    const pieces = range.map((p) => request.pieces[p]);
    const holds = new Set(pieces.map((p) => fileOf(p.path, known)));
    const files = request.files.filter((f) => holds.has(f.path) || (k === 0 && f.error !== null));
    const notes = joinNotes(range.map((piece) => ({ notes: request.notes, piece })));
    const built = await buildIndexFile(path, { pieces, notes, files, percussion: request.percussion, shard: { build, name, number: k + 1, of: runs.length, firstPiece: run.first } });
    entries.push({ path: basename(path), firstPiece: run.first, pieces: run.pieces, notes: built.notes, points: built.points, crc: readIndexCrc(path) });
  }
  writeShardManifest(request.manifest, { format: MANIFEST_FORMAT, version: MANIFEST_VERSION, build, name, percussion: request.percussion, shards: entries });
  return { manifest: request.manifest, shards: entries.map((e) => ({ path: join(dirname(request.manifest), e.path), pieces: e.pieces, notes: e.notes })) };
}

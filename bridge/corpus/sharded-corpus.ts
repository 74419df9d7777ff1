/**
 * `--corpus MANIFEST`: the shards a manifest names (bridge/formats/shard-manifest.ts),
 * every one opened in this process and presented as one corpus: pieces end
 * to end in the manifest's order, and one matcher that asks every shard and
 * merges their answers as one index would give them (core/shards.ts). Each
 * shard file must be the one the manifest was written with (its checksum).
 *
 * @example
 *   const opened = openShards('songs/.earwitness-shards.json', { pitch: 'chromatic' });
 *   opened.matcher({ pitch: 'chromatic', window: 16, mode: EXACT_MODE }).best({ points, startGrains: 0 })
 *   // → the match the one index of the same corpus gives
 */
import type { CorpusPoints, Piece } from '../../core/corpus.js';
import type { PitchMode, Point } from '../../core/note.js';
import { candidatesFor } from '../../core/pipeline.js';
import { notesWithin } from '../../core/review.js';
import { type ShardMatcher, mergedMatcher, shardMatcher } from '../../core/shards.js';
import { readIndexCrc, readIndexMeta } from '../formats/index-file.js';
import { type ShardEntry, type ShardManifest, readShardManifest, shardPath } from '../formats/shard-manifest.js';
import { UsageError } from '../formats/user-error.js';
import { type MatcherRequest, type OpenOptions, type OpenedCorpus, openCorpus } from './open-corpus.js';

/** Points of one pitch dimension in the whole corpus: what decides between every translation and the index, as for one index. */
export const manifestPoints = (manifest: ShardManifest, pitch: PitchMode): number => manifest.shards.reduce((n, s) => n + s.points[pitch], 0);

/** The candidates every shard of a manifest matches with for a request (the whole corpus's size decides). */
export const shardCandidates = (manifest: ShardManifest, request: Pick<MatcherRequest, 'pitch' | 'exact'>) => candidatesFor(manifestPoints(manifest, request.pitch), request.exact ?? false);

/**
 * Why a shard file is not the one the manifest names, or null when it is:
 * its section table's checksum and the build, number and first piece its META records.
 */
export function shardMismatch(file: string, manifest: ShardManifest, number: number): string | null {
  const entry = manifest.shards[number - 1];
  const crc = readIndexCrc(file);
  if (crc !== entry.crc) return `${file} has checksum ${crc}, the manifest expects ${entry.crc} for shard ${number}: the file was rebuilt or replaced since`;
  const shard = readIndexMeta(file).shard;
  if (!shard) return `${file} is a whole corpus index, not a shard`;
  if (shard.build !== manifest.build || shard.name !== manifest.name || shard.number !== number || shard.of !== manifest.shards.length || shard.firstPiece !== entry.firstPiece) {
    return `${file} is shard ${shard.number} of ${shard.of} of build ${shard.build}, the manifest names it shard ${number} of ${manifest.shards.length} of build ${manifest.build}`;
  }
  return null;
}

/** Opens one shard, refusing a file that is not the one the manifest names. */
function openShard(manifestFile: string, manifest: ShardManifest, entry: ShardEntry, number: number, options: OpenOptions): OpenedCorpus {
  const file = shardPath(manifestFile, entry);
  let why: string | null;
  try {
    why = shardMismatch(file, manifest, number);
  } catch (e) {
    throw new UsageError(`--corpus ${manifestFile}: shard ${number}: ${(e as Error).message}`);
  }
  if (why) throw new UsageError(`--corpus ${manifestFile}: ${why}; build the shards again with: earwitness corpus build DIR --shards ${manifest.shards.length}`);
  return openCorpus(file, options);
}

/** Point arrays of every shard's pieces, end to end, made when first read. */
function joinedView(mode: PitchMode, pieces: Piece[], shards: readonly OpenedCorpus[]): CorpusPoints {
  const views = shards.map((s) => s.view(mode));
  const points: Point[][] = [];
  for (const view of views) for (let p = 0; p < view.pieces.length; p++) Object.defineProperty(points, points.length, { enumerable: true, get: () => view.points[p] });
  return { mode, pieces, points, size: views.reduce((n, v) => n + v.size, 0) };
}

/** The shard matchers of a manifest's opened shards for a request. */
export function shardMatchers(manifest: ShardManifest, shards: readonly OpenedCorpus[], request: MatcherRequest): ShardMatcher[] {
  const candidates = shardCandidates(manifest, request);
  return shards.map((s, k) => shardMatcher(s.matchCorpus(request.pitch), { windowBeats: request.window, mode: request.mode, candidates, firstPiece: manifest.shards[k].firstPiece }));
}

export function openShards(manifestFile: string, options: OpenOptions = {}): OpenedCorpus {
  const manifest = readShardManifest(manifestFile);
  if (manifest.percussion !== (options.percussion ?? false)) {
    throw new UsageError(`--corpus ${manifestFile}: the shards were built ${manifest.percussion ? 'with' : 'without'} --percussion; rebuild them with the same choice, or leave the option ${manifest.percussion ? 'on' : 'off'}`);
  }
  const shards = manifest.shards.map((entry, k) => openShard(manifestFile, manifest, entry, k + 1, options));
  const pieces = shards.flatMap((s) => s.corpus.pieces);
  return {
    source: manifestFile,
    corpus: { pieces },
    notes: shards.reduce((n, s) => n + s.notes, 0),
    skipped: shards.flatMap((s) => s.skipped),
    indexFile: null,
    view: (mode) => joinedView(mode, pieces, shards),
    // Live listening, the caller that reads notes a span at a time, takes no manifest: the piece's own notes serve.
    notesIn: (piece, span) => notesWithin(pieces[piece].notes, span),
    matchCorpus: () => {
      throw new UsageError(`--corpus ${manifestFile}: live listening takes one index or a folder, not a shard manifest`);
    },
    matcher: (request) => mergedMatcher(shardMatchers(manifest, shards, request), { counting: true }),
  };
}

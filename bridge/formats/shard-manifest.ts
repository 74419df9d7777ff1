/**
 * The shard manifest `corpus build DIR --shards K` writes beside its K index
 * files (by default `DIR/.earwitness-shards.json`): which files hold which
 * run of pieces, and each file's checksum, so a worker serving the wrong
 * file, or a file rebuilt since, is refused. Shard paths are relative to
 * the manifest's folder.
 *
 * @example
 *   writeShardManifest('songs/.earwitness-shards.json', manifest);
 *   readShardManifest('songs/.earwitness-shards.json').shards[1]
 *   // → { path: '.earwitness-shard-2-of-3', firstPiece: 40, pieces: 41, notes: 27012, points: { chromatic: 26990, morphetic: 26990 }, crc: '5a1c09e2' }
 */
import { closeSync, openSync, readFileSync, readSync, renameSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { z } from 'zod';
import { readSaved } from './saved.js';
import { UsageError } from './user-error.js';

export const MANIFEST_NAME = '.earwitness-shards.json';
export const MANIFEST_FORMAT = 'earwitness shards';
export const MANIFEST_VERSION = 1;

/** The file name of shard `number` (from 1) of `of`. */
export const shardFileName = (number: number, of: number): string => `.earwitness-shard-${number}-of-${of}`;

const count = z.number().int().min(0).describe('a whole number');
const shardSchema = z.object({
  path: z.string().min(1).describe('an index file path, relative to the manifest'),
  firstPiece: count,
  pieces: count,
  notes: count,
  points: z.object({ chromatic: count, morphetic: count }),
  crc: z.string().regex(/^[0-9a-f]{8}$/).describe('eight hex digits'),
});

export const manifestSchema = z.object({
  format: z.literal(MANIFEST_FORMAT).describe(`"${MANIFEST_FORMAT}"`),
  version: z.literal(MANIFEST_VERSION).describe(`${MANIFEST_VERSION}`),
  /** Made anew by every build: a shard file names the build it belongs to. */
  build: z.string().regex(/^[0-9a-f]{16}$/).describe('sixteen hex digits'),
  /** What the queues are named after: the corpus folder's name. */
  name: z.string().regex(/^[A-Za-z0-9_.-]{1,64}$/).describe('letters, digits, _ . or -, at most 64'),
  percussion: z.boolean().describe('true or false'),
  shards: z.array(shardSchema).min(1).describe('a list of at least one shard'),
});
export type ShardManifest = z.infer<typeof manifestSchema>;
export type ShardEntry = z.infer<typeof shardSchema>;

/** Whether a file starts like a manifest (JSON) rather than an index (a binary signature). */
export function looksLikeManifest(file: string): boolean {
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch {
    return false;
  }
  try {
    const head = Buffer.alloc(64);
    return head.toString('utf8', 0, readSync(fd, head, 0, head.length, 0)).trimStart().startsWith('{');
  } finally {
    closeSync(fd);
  }
}

/** Reads and checks a manifest; a bad one is a UsageError naming the file, the field and how to fix it. */
export function readShardManifest(file: string): ShardManifest {
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    throw new UsageError(`--corpus ${file}: not a shard manifest (${(e as Error).message}); write one with: earwitness corpus build DIR --shards K`);
  }
  const manifest = readSaved(manifestSchema, json, (p) =>
    new UsageError(`--corpus ${file}: shard manifest field ${p.field}: got ${p.got}; expected ${p.expected}; build it again with: earwitness corpus build DIR --shards K`));
  let next = 0;
  for (const [k, s] of manifest.shards.entries()) {
    if (s.firstPiece !== next) throw new UsageError(`--corpus ${file}: shard ${k + 1} starts at piece ${s.firstPiece}, expected ${next} (the pieces of the shards before it); build it again with: earwitness corpus build DIR --shards K`);
    next += s.pieces;
  }
  return manifest;
}

/** A shard's index file as a path from here. */
export const shardPath = (manifestFile: string, shard: ShardEntry): string => resolve(dirname(manifestFile), shard.path);

/** Writes a manifest atomically. */
export function writeShardManifest(file: string, manifest: ShardManifest): void {
  const temp = `${file}.${process.pid}.partial`;
  writeFileSync(temp, JSON.stringify(manifest, null, 2) + '\n');
  renameSync(temp, file);
}

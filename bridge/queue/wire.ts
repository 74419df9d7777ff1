/**
 * What travels through a shard's queue: batches of window points one way,
 * match results the other, and nothing else (no file names, no titles, no
 * notes beyond the window's own points). Points go as flat arrays
 * [at, pitch, at, pitch, …] in grains and pitch steps. Every job names the
 * build and checksum of the shard it is meant for, so a worker serving
 * another file refuses it.
 *
 * @example
 *   queueName({ name: 'songs', number: 2, of: 3 })   // → 'earwitness-songs-shard-2-of-3'
 *   flatPoints([{ at: 0, pitch: 60 }, { at: 960, pitch: 62 }])   // → [0, 60, 960, 62]
 */
import type { PitchMode, Point } from '../../core/note.js';
import type { MatchWindow, WindowMatch } from '../../core/match.js';
import type { CandidateKind, MatchMode } from '../../core/pipeline.js';
import type { ShardAnswer } from '../../core/shards.js';

/** The queue of one shard of a named corpus. */
export const queueName = (shard: { name: string; number: number; of: number }): string => `earwitness-${shard.name}-shard-${shard.number}-of-${shard.of}`;

/** The matcher a job asks for: the same on every shard, decided by the whole corpus. */
export interface WireRequest {
  pitch: PitchMode;
  window: number;
  mode: MatchMode;
  candidates: CandidateKind;
}

/** Which shard file a job is meant for. */
export interface WireShard {
  build: string;
  number: number;
  crc: string;
}

export interface WireWindow {
  points: number[];
  startGrains: number;
  /** Corpus-wide, or null. */
  exclude: number | null;
}

/** Round one: each window's best; round two: the pieces holding each material. */
export type JobData = WireShard & { request: WireRequest } & ({ round: 'best'; windows: WireWindow[] } | { round: 'count'; items: { material: number[]; exclude: number | null }[] });

export type WireAnswer = [match: WindowMatch | null, material: number[], holding: number];

export const flatPoints = (points: readonly Point[]): number[] => points.flatMap((p) => [p.at, p.pitch]);

export function pointsOf(flat: readonly number[]): Point[] {
  const out: Point[] = [];
  for (let i = 0; i + 1 < flat.length; i += 2) out.push({ at: flat[i], pitch: flat[i + 1] });
  return out;
}

export const wireWindow = (w: MatchWindow): WireWindow => ({ points: flatPoints(w.points), startGrains: w.startGrains, exclude: w.exclude ?? null });

export const matchWindow = (w: WireWindow): MatchWindow => ({ points: pointsOf(w.points), startGrains: w.startGrains, ...(w.exclude === null ? {} : { exclude: w.exclude }) });

export const wireAnswer = (a: ShardAnswer): WireAnswer => [a.match, flatPoints(a.material), a.holding];

export const shardAnswer = ([match, material, holding]: WireAnswer): ShardAnswer => ({ match, material: pointsOf(material), holding });

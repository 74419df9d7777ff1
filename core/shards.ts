/**
 * A corpus cut into shards, matched as if it were one: each shard holds a
 * run of consecutive pieces (`firstPiece` on), so a shard's own piece order
 * is the corpus's and its ties break as one index breaks them.
 *
 * Two rounds per window. First every shard answers with its best match
 * (piece numbers corpus-wide), the points of the corpus material that match
 * lands on, and how many of its own pieces hold that material. The best
 * answer wins (`betterMatch`); then every other shard counts the pieces
 * holding the winner's material, and the counts are summed: the pieces
 * holding it corpus-wide, as distinctiveness counts them (core/distinctiveness.ts).
 * Points are grains and pitch steps only: no names travel.
 *
 * @example
 *   const shards = parts.map((p) => shardMatcher(p.corpus, { firstPiece: p.first, windowBeats: 16, mode, candidates: 'every' }));
 *   const answers = shards.map((s) => s.best(window));
 *   const won = winningAnswer(answers);
 *   const counts = shards.map((s, k) => (k === won!.shard ? won!.answer.holding : s.count(won!.answer.material, window.exclude)));
 *   finishMatch(won!.answer, counts)   // → { piece: 12, ..., score: 1, distinctiveness: 0.5 }
 *   mergedMatcher(shards, { counting: true }).best(window)   // the same, both rounds in one process
 *   dealRuns([10, 30, 20, 20, 20], 2)  // → [{ first: 0, pieces: 3 }, { first: 3, pieces: 2 }]: 60 and 40 notes
 */
import { type Point, toGrains } from './note.js';
import { type MatchWindow, type WindowMatch, type WindowMatcher, betterMatch } from './match.js';
import { type MatchCorpus, type MatcherOptions, bestOfStages, everyCandidates, pieceCountOf, stagesOf, tempoFreeTolerance } from './pipeline.js';
import { indexCandidates } from './index-match.js';
import { MIN_FIGURE_NOTES, distinctivenessOf, indexedPiecesHolding, matchedMaterial, piecesHolding } from './distinctiveness.js';

/** One shard's answer for a window. */
export interface ShardAnswer {
  /** Its best match, piece numbered corpus-wide, without distinctiveness; null when none. */
  match: WindowMatch | null;
  /** The corpus points the match lands on (empty without a match, or with distinctiveness off). */
  material: Point[];
  /** This shard's pieces holding `material`. */
  holding: number;
}

export interface ShardMatcher {
  readonly windowBeats: number;
  /** Round one: the shard's best for a window whose `exclude` is corpus-wide. */
  best(window: MatchWindow): ShardAnswer;
  /** Round two: this shard's pieces holding `material`, `exclude` (corpus-wide) left out. */
  count(material: readonly Point[], exclude?: number): number;
}

export interface ShardOptions extends MatcherOptions {
  /** The corpus-wide number of the shard's first piece. */
  firstPiece: number;
}

/** The matcher of one shard: the pipeline's stages on its points, answers numbered corpus-wide. */
export function shardMatcher(corpus: MatchCorpus, options: ShardOptions): ShardMatcher {
  const { windowBeats, mode, firstPiece } = options;
  if (options.candidates === 'index' && !corpus.index) throw new RangeError('index candidates need the corpus index');
  const throughIndex = options.candidates === 'index';
  const stages = stagesOf(corpus, throughIndex ? indexCandidates(corpus.index!, options.filter) : everyCandidates(corpus.flat), mode);
  const spanGrains = toGrains(windowBeats);
  const pieces = corpus.flat.offsets.length - 1;
  const counting = options.distinctiveness !== false;
  const tolGrains = toGrains(mode.tempoFree ? tempoFreeTolerance(mode) : mode.tolerance);
  const { index } = pieceCountOf(corpus, mode, throughIndex);
  /** A corpus-wide piece number as this shard's, or undefined when another shard holds it. */
  const local = (piece?: number): number | undefined => (piece !== undefined && piece >= firstPiece && piece < firstPiece + pieces ? piece - firstPiece : undefined);
  const countLocal = (source: number | undefined, material: readonly Point[], exclude?: number): number =>
    material.length < MIN_FIGURE_NOTES ? 0 : index ? indexedPiecesHolding(index, source, material, exclude) : piecesHolding(material, corpus.flat, exclude);
  return {
    windowBeats,
    best(window) {
      const exclude = local(window.exclude);
      const own = { ...window, exclude };
      const m = bestOfStages(stages, own, spanGrains, mode);
      if (!m) return { match: null, material: [], holding: 0 };
      const material = counting && m.matched > 0 ? matchedMaterial(corpus.flat, own, spanGrains, m, tolGrains) : [];
      return { match: { ...m, piece: m.piece + firstPiece }, material, holding: countLocal(m.piece, material, exclude) };
    },
    count: (material, exclude) => countLocal(undefined, material, local(exclude)),
  };
}

/** The winning answer of round one and its shard, or null when no shard matched. */
export function winningAnswer(answers: readonly ShardAnswer[]): { shard: number; answer: ShardAnswer } | null {
  let won: { shard: number; answer: ShardAnswer } | null = null;
  answers.forEach((answer, shard) => {
    if (answer.match && betterMatch(answer.match, won?.answer.match ?? null)) won = { shard, answer };
  });
  return won;
}

/** Whether the winner's material needs counting on the other shards (a figure of MIN_FIGURE_NOTES or more). */
export const needsCount = (answer: ShardAnswer): boolean => answer.material.length >= MIN_FIGURE_NOTES;

/**
 * The winning match with its distinctiveness from every shard's count
 * (the winner's own among them), or without it when distinctiveness was off.
 */
export function finishMatch(answer: ShardAnswer, counts: readonly number[], counting = true): WindowMatch | null {
  const m = answer.match;
  if (!m || m.matched === 0 || !counting) return m;
  return { ...m, distinctiveness: needsCount(answer) ? distinctivenessOf(counts.reduce((a, b) => a + b, 0)) : 0 };
}

/** The shards' matchers as one, in one process: both rounds asked in turn of each shard. */
export function mergedMatcher(shards: readonly ShardMatcher[], options: { counting: boolean }): WindowMatcher {
  if (shards.length === 0) throw new RangeError('a merged matcher needs at least one shard');
  return {
    windowBeats: shards[0].windowBeats,
    best(window) {
      const won = winningAnswer(shards.map((s) => s.best(window)));
      if (!won) return null;
      const counts = needsCount(won.answer) ? shards.map((s, k) => (k === won.shard ? won.answer.holding : s.count(won.answer.material, window.exclude))) : [];
      return finishMatch(won.answer, counts, options.counting);
    },
  };
}

/** A run of consecutive pieces. */
export interface PieceRun {
  first: number;
  pieces: number;
}

/**
 * Pieces cut into `shards` runs of consecutive pieces holding similar note
 * counts: each run ends where the notes so far come nearest its share of
 * the whole, and every run holds at least one piece.
 */
export function dealRuns(notes: readonly number[], shards: number): PieceRun[] {
  if (!(Number.isInteger(shards) && shards >= 1 && shards <= notes.length)) throw new RangeError(`shards must be a whole number from 1 to the ${notes.length} pieces, got ${shards}`);
  const total = notes.reduce((a, b) => a + b, 0);
  const runs: PieceRun[] = [];
  let first = 0;
  let sum = 0;
  for (let k = 1; k < shards; k++) {
    const share = (total * k) / shards;
    let end = first + 1;
    sum += notes[first];
    // Leave at least one piece for each run still to come.
    while (end < notes.length - (shards - k) && Math.abs(sum + notes[end] - share) <= Math.abs(sum - share)) sum += notes[end++];
    runs.push({ first, pieces: end - first });
    first = end;
  }
  runs.push({ first, pieces: notes.length - first });
  return runs;
}

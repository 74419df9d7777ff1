/**
 * Finding quotations played at another tempo, by symbolic fingerprinting
 * (Arzt, Böck & Widmer 2012, "Fast identification of piece and score position
 * via symbolic fingerprinting", ISMIR).
 *
 * Every note a is paired with each of the next few notes b after it, and b
 * with each of the next few notes c after b. The triple's key is (pitch of b −
 * a, pitch of c − b, ratio of the inter-onset intervals (t_c − t_b) / (t_b −
 * t_a) on a logarithmic grid): transposing or changing the tempo leaves it
 * unchanged. A window's triples look their keys up in the corpus's table;
 * each hit votes for a (piece, position, time scale, transposition) cell; the
 * best-voted cells are verified by rescaling the window's time to the corpus
 * passage's and matching with a tolerance, then the time scale is refitted by
 * least squares over the matched notes and verified once more.
 *
 * `timeScale` is played duration / corpus duration: 1.5 means the passage
 * was played half as long again as written (slower), 0.5 twice as fast.
 *
 * @example
 *   const m = tempoFreeMatcher(view, exactMatcher(view, 16));
 *   m.best(playedSlower, toGrains(0))
 *   // → { piece: 2, pieceStart: 4, transposition: 0, matched: 30, excerptNotes: 30, score: 1, timeScale: 1.5 }
 */
import { type Point, GRAINS_PER_BEAT, comparePoints, lowerBound, toGrains } from './note.js';
import type { CorpusPoints } from './corpus.js';
import { type WindowMatch, type WindowMatcher, betterMatch } from './match.js';
import { type PitchLines, bestInPiece, checkTolerance, pitchLines, toleranceMatching } from './tolerance.js';

export interface FingerprintSettings {
  /** Each note pairs with this many later notes, and each of those with as many after it. */
  fanOut: number;
  /** Onsets closer than this many beats (in the passage's own time) are not a step in time. */
  minGap: number;
  /** Slowest and fastest tempo ratios searched (played / corpus duration). */
  minScale: number;
  maxScale: number;
  /** Best-voted cells verified per window. */
  candidates: number;
  /** Tolerance in corpus beats of the verifying match; a time scale estimated from notes is never exact. */
  tolerance: number;
}

export const DEFAULT_FINGERPRINT: FingerprintSettings = { fanOut: 4, minGap: 0.125, minScale: 0.5, maxScale: 2, candidates: 4, tolerance: 0.05 };

/** Width of a ratio bin, in natural-log units: simple ratios (1, 2, 3/2, 4/3, 3) fall well inside their bins. */
const RATIO_STEP = 0.1;
/** Vote cells: one beat of corpus position, 4% of time scale. */
const POSITION_CELL = GRAINS_PER_BEAT;
const SCALE_CELL = 0.04;
/** How far (grains) verification looks from a cell's estimated position. */
const NEAR_WITHIN = 2 * GRAINS_PER_BEAT;

/** Packs a triple's key: pitch intervals within ±127, ratio bins within ±127. */
const tripleKey = (a: Point, b: Point, c: Point): number => {
  const r = Math.max(-127, Math.min(127, Math.round(Math.log((c.at - b.at) / (b.at - a.at)) / RATIO_STEP)));
  return ((b.pitch - a.pitch + 128) * 256 + (c.pitch - b.pitch + 128)) * 256 + (r + 128);
};

/** Calls `emit` with the indices of every triple of a sorted point set. */
function eachTriple(points: readonly Point[], fanOut: number, gapGrains: number, emit: (a: number, b: number, c: number) => void): void {
  for (let a = 0; a < points.length; a++) {
    const b0 = lowerBound(points, points[a].at + gapGrains);
    for (let b = b0; b < Math.min(points.length, b0 + fanOut); b++) {
      const c0 = lowerBound(points, points[b].at + gapGrains);
      for (let c = c0; c < Math.min(points.length, c0 + fanOut); c++) emit(a, b, c);
    }
  }
}

/** The corpus's triples by key; each entry is four numbers: piece, then the indices of a, b, c. */
export type FingerprintTable = Map<number, number[]>;

export function fingerprintTable(corpus: CorpusPoints, settings: FingerprintSettings = DEFAULT_FINGERPRINT): FingerprintTable {
  const table: FingerprintTable = new Map();
  const gap = toGrains(settings.minGap);
  corpus.points.forEach((points, piece) =>
    eachTriple(points, settings.fanOut, gap, (a, b, c) => {
      const k = tripleKey(points[a], points[b], points[c]);
      const list = table.get(k);
      if (list) list.push(piece, a, b, c);
      else table.set(k, [piece, a, b, c]);
    }),
  );
  return table;
}

/** A window's points on the corpus's time: offsets from the window start divided by `scale`. */
export function scaleTime(window: readonly Point[], startGrains: number, scale: number): Point[] {
  return window.map((p) => ({ at: startGrains + Math.round((p.at - startGrains) / scale), pitch: p.pitch })).sort(comparePoints);
}

interface Cell {
  piece: number;
  position: number;
  scale: number;
  pitch: number;
  votes: number;
  /** Sums over the votes, for the cell's mean log scale and mean corpus start. */
  logScale: number;
  start: number;
}

const cellKey = (piece: number, position: number, scale: number, pitch: number): number =>
  ((piece * 2 ** 22 + (position + 2 ** 21)) * 64 + (scale + 32)) * 256 + (pitch + 128);

/** Votes of the window's triples: cells keyed by (piece, corpus position of the window start, time scale, transposition). */
function vote(table: FingerprintTable, corpus: CorpusPoints, window: readonly Point[], startGrains: number, settings: FingerprintSettings, exclude?: number): Map<number, Cell> {
  const cells = new Map<number, Cell>();
  eachTriple(window, settings.fanOut, toGrains(settings.minGap), (a, b, c) => {
    const qa = window[a];
    const qc = window[c];
    const hits = table.get(tripleKey(qa, window[b], qc));
    if (!hits) return;
    for (let h = 0; h < hits.length; h += 4) {
      const piece = hits[h];
      if (piece === exclude) continue;
      const points = corpus.points[piece];
      const ca = points[hits[h + 1]];
      const scale = (qc.at - qa.at) / (points[hits[h + 3]].at - ca.at);
      if (scale < settings.minScale || scale > settings.maxScale) continue;
      const start = ca.at - (qa.at - startGrains) / scale;
      const position = Math.floor(start / POSITION_CELL);
      const scaleBin = Math.round(Math.log(scale) / SCALE_CELL);
      const pitch = qa.pitch - ca.pitch;
      const k = cellKey(piece, position, scaleBin, pitch);
      const cell = cells.get(k) ?? { piece, position, scale: scaleBin, pitch, votes: 0, logScale: 0, start: 0 };
      cell.votes++;
      cell.logScale += Math.log(scale);
      cell.start += start;
      cells.set(k, cell);
    }
  });
  return cells;
}

/** An estimated alignment: corpus piece, corpus start of the window (grains), time scale, transposition. */
interface Alignment {
  piece: number;
  start: number;
  scale: number;
  pitch: number;
}

/**
 * The best-voted places, counting each cell's votes together with its
 * neighbours' in position and scale (a vote near a cell edge may land either
 * side), and skipping cells next to one already taken.
 */
function bestAlignments(cells: Map<number, Cell>, count: number): Alignment[] {
  const around = (c: Cell): Cell[] => {
    const out: Cell[] = [];
    for (let dp = -1; dp <= 1; dp++) {
      for (let ds = -1; ds <= 1; ds++) {
        const n = cells.get(cellKey(c.piece, c.position + dp, c.scale + ds, c.pitch));
        if (n) out.push(n);
      }
    }
    return out;
  };
  const ranked = [...cells.values()]
    .map((c) => ({ c, votes: around(c).reduce((s, n) => s + n.votes, 0) }))
    .sort((x, y) => y.votes - x.votes || x.c.piece - y.c.piece || x.c.position - y.c.position || x.c.scale - y.c.scale || x.c.pitch - y.c.pitch);
  const taken: Cell[] = [];
  const out: Alignment[] = [];
  for (const { c } of ranked) {
    if (out.length >= count) break;
    if (taken.some((t) => t.piece === c.piece && t.pitch === c.pitch && Math.abs(t.position - c.position) <= 1 && Math.abs(t.scale - c.scale) <= 1)) continue;
    taken.push(c);
    const group = around(c);
    const votes = group.reduce((s, n) => s + n.votes, 0);
    out.push({
      piece: c.piece,
      start: group.reduce((s, n) => s + n.start, 0) / votes,
      scale: Math.exp(group.reduce((s, n) => s + n.logScale, 0) / votes),
      pitch: c.pitch,
    });
  }
  return out;
}

interface Verifier {
  corpus: CorpusPoints;
  lines: PitchLines[];
  windowGrains: number;
  tolGrains: number;
}

/** Rescales the window to the alignment's time scale and matches it near the estimated place. */
function verify(v: Verifier, window: readonly Point[], startGrains: number, a: Alignment): { match: WindowMatch; scaled: Point[] } | null {
  const scaled = scaleTime(window, startGrains, a.scale);
  const m = bestInPiece(
    {
      piece: a.piece,
      points: v.corpus.points[a.piece],
      lines: v.lines[a.piece],
      window: scaled,
      startGrains,
      spanGrains: Math.round(v.windowGrains / a.scale),
      tolGrains: v.tolGrains,
      near: { translation: { at: Math.round(startGrains - a.start), pitch: a.pitch }, within: NEAR_WITHIN },
    },
    null,
  );
  // Four decimals: finer than any tempo difference a player could mean.
  return m ? { match: { ...m, timeScale: Math.round(a.scale * 1e4) / 1e4 }, scaled } : null;
}

/**
 * The least-squares line from the matched corpus onsets to the played ones
 * (in the window's own time): its slope is the time scale, and it places the
 * window start in the corpus. Null with fewer than 3 pairs or a flat fit.
 */
function refit(v: Verifier, found: { match: WindowMatch; scaled: Point[] }, startGrains: number): Alignment | null {
  const { match, scaled } = found;
  const scale = match.timeScale!;
  const shift = startGrains - Math.round(match.pieceStart * GRAINS_PER_BEAT);
  const pairs = toleranceMatching(v.lines[match.piece], scaled, { at: shift, pitch: match.transposition }, v.tolGrains);
  if (pairs.length < 3) return null;
  const xs = pairs.map((p) => p.corpus.at);
  const ys = pairs.map((p) => startGrains + (p.query.at - startGrains) * scale);
  const mx = xs.reduce((s, x) => s + x, 0) / xs.length;
  const my = ys.reduce((s, y) => s + y, 0) / ys.length;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < xs.length; i++) {
    sxy += (xs[i] - mx) * (ys[i] - my);
    sxx += (xs[i] - mx) ** 2;
  }
  if (sxx === 0) return null;
  const fitted = sxy / sxx;
  if (!(fitted > 0)) return null;
  return { piece: match.piece, start: mx - (my - startGrains) / fitted, scale: fitted, pitch: match.transposition };
}

/**
 * Wraps a matcher so each window is also searched at other tempi. The
 * wrapped matcher's answer stands (with time scale 1) unless a verified
 * fingerprint candidate beats it.
 */
export function tempoFreeMatcher(corpus: CorpusPoints, base: WindowMatcher, options: Partial<FingerprintSettings> = {}): WindowMatcher {
  const settings = { ...DEFAULT_FINGERPRINT, ...options };
  checkTolerance(settings.tolerance);
  if (!(settings.minScale > 0 && settings.minScale <= 1 && settings.maxScale >= 1 && Number.isFinite(settings.maxScale))) {
    throw new RangeError(`time scales must satisfy 0 < minScale ≤ 1 ≤ maxScale, got ${settings.minScale}…${settings.maxScale}`);
  }
  if (!(Number.isInteger(settings.fanOut) && settings.fanOut >= 1)) throw new RangeError(`fanOut must be a whole number ≥ 1, got ${settings.fanOut}`);
  if (!(Number.isInteger(settings.candidates) && settings.candidates >= 1)) throw new RangeError(`candidates must be a whole number ≥ 1, got ${settings.candidates}`);
  const table = fingerprintTable(corpus, settings);
  const v: Verifier = { corpus, lines: corpus.points.map(pitchLines), windowGrains: toGrains(base.windowBeats), tolGrains: toGrains(settings.tolerance) };
  const inRange = (a: Alignment | null): a is Alignment => a !== null && a.scale >= settings.minScale && a.scale <= settings.maxScale;
  return {
    windowBeats: base.windowBeats,
    best(window, startGrains, options = {}) {
      const plain = base.best(window, startGrains, options);
      let best: WindowMatch | null = plain && { ...plain, timeScale: 1 };
      for (const a of bestAlignments(vote(table, corpus, window, startGrains, settings, options.exclude), settings.candidates)) {
        const found = verify(v, window, startGrains, a);
        if (!found) continue;
        const again = refit(v, found, startGrains);
        const refined = inRange(again) ? verify(v, window, startGrains, again) : null;
        const pick = refined && !betterMatch(found.match, refined.match) ? refined.match : found.match;
        if (betterMatch(pick, best)) best = pick;
      }
      return best;
    },
  };
}

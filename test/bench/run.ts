/**
 * The matching benchmark: `npm run bench` (all corpora, tens of minutes),
 * `npm run bench -- --quick` (100k and 1M notes, about a minute) or
 * `npm run bench -- --large` (100M notes alone: its time and memory are in
 * test/bench/RESULTS.md).
 * Deterministic corpora and queries; timings are wall-clock on whatever else
 * the machine is doing (the load average is printed beside them) and CPU
 * time of this process. Prints a table per corpus, then as its last line one
 * JSON object with every figure, which it also adds to test/bench/RESULTS.md.
 *
 * Each corpus: build the index as `corpus build` does (streamed: notes,
 * triples and fingerprints, both pitch dimensions), load it back,
 * then score 16-beat windows (hop 8) of queries cut from the corpus —
 * verbatim transposed copies, copies with 20% of notes altered, copies played
 * ±0.06 beat with 10% dropped, copies at 0.75×, 1.5× and 2× the tempo — and
 * unrelated material. One row per matching mode (exact, tolerance 0.1,
 * tempo-free) and candidate source (the index's votes, every translation:
 * the reference, on as many windows as its time budget allows), with
 * distinctiveness counted as a report counts it, the speed-up over the
 * reference and the recall of the reference's strong windows. Then the live
 * path per note in each mode, and a one-hour session reviewed at 1M notes.
 *
 * @example
 *   npm run bench -- --quick
 *   npm run bench -- --only 10M --reference-seconds 60    // one corpus of the full run
 *   // …tables…
 *   // {"quick":true,"corpora":[{"corpus":"synthetic 100k","notes":100123,...,"modes":[{"mode":"exact","candidates":"index",...}]}]}
 */
import { spawn, spawnSync } from 'node:child_process';
import { once } from 'node:events';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import type { CorpusPoints } from '../../core/corpus.js';
import type { MatchWindow, WindowMatch, WindowMatcher } from '../../core/match.js';
import { windows } from '../../core/windows.js';
import { percentile, seededRandom } from '../../core/stats.js';
import { type FlatNotes, notePoints } from '../../core/flat-notes.js';
import { type FlatPoints, CORPUS_TRIPLES, corpusIndex, flattenPoints } from '../../core/triple-index.js';
import { type StoredFingerprints, DEFAULT_FINGERPRINT, FINGERPRINT_SHAPE } from '../../core/fingerprint.js';
import { DEFAULT_FILTER } from '../../core/index-match.js';
import { type CandidateKind, type MatchCorpus, type MatchMode, windowMatcher } from '../../core/pipeline.js';
import { LIVE_TABLE_BITS, LiveMatcher } from '../../core/live-match.js';
import { idleCollector } from '../../bridge/daemon/idle-collect.js';
import { originalityReport } from '../../core/report.js';
import { readIndexFile } from '../../bridge/formats/index-file.js';
import { IndexBuilder } from '../../bridge/formats/index-build.js';
import { decodeChorale } from '../helpers/jsb.js';
import { recordResults } from './results.js';
import { synthPieces, unrelated } from './synthetic.js';
import { jsbModeCosts, modeCostTable } from './modes.js';

const W = 16;
const HOP = 8;
const QUERY_BEATS = 48;
const JSB = join(import.meta.dirname, '../../../../shared/data/jsb-chorales/Jsb16thSeparated.json');

type Kind = 'verbatim' | 'altered' | 'played' | 'tempo' | 'unrelated';
const KINDS: Kind[] = ['verbatim', 'altered', 'played', 'tempo', 'unrelated'];
/** Tempo ratios the tempo kind is played at, in turn. */
const SCALES = [0.75, 1.5, 2];

interface Probe extends MatchWindow {
  kind: Kind;
  /** Where the query was cut from, and at what tempo ratio it was played. */
  source: { piece: number; scale: number } | null;
}

interface Latency {
  p50Ms: number;
  p99Ms: number;
  windows: number;
}

const BENCH_MODES: { name: string; mode: MatchMode; kinds: Kind[]; referenceShare: number }[] = [
  { name: 'exact', mode: { tolerance: 0, tempoFree: false }, kinds: ['verbatim', 'altered', 'unrelated'], referenceShare: 0.5 },
  { name: 'tolerance 0.1', mode: { tolerance: 0.1, tempoFree: false }, kinds: ['verbatim', 'altered', 'played', 'unrelated'], referenceShare: 0.3 },
  { name: 'tempo-free', mode: { tolerance: 0, tempoFree: true }, kinds: ['verbatim', 'tempo', 'unrelated'], referenceShare: 0.2 },
];

/** One (mode × candidate source) row. */
export interface ModeRow {
  mode: string;
  candidates: CandidateKind;
  latency: Latency;
  /** Windows matched per second of this process's CPU time (what an otherwise idle machine would show)… */
  windowsPerCpuSecond: number;
  /** …and with distinctiveness counted, as a report counts it (index rows). */
  reportWindowsPerCpuSecond: number | null;
  /** The reference's p50 over this source's p50 on the same windows (1 for the reference; null when the reference was skipped). */
  speedup: number | null;
  /** Of the windows the reference scores ≥ 0.5 (≥ 0.3): the share this source scores the same. */
  recall: { atLeast05: { share: number | null; windows: number }; atLeast03: { share: number | null; windows: number } };
  /** Windows where this source scored above the reference: must be 0. */
  aboveReference: number;
  /** Whole windows of verbatim (transposed) copies scored 1, as every one of them should be: recall where no reference is run. */
  verbatimFound: { found: number; windows: number };
  /** Tempo-free only: copies at another tempo whose piece was found with the time scale within 2%. */
  tempo?: { found: number; windows: number };
}

export interface CorpusRow {
  corpus: string;
  notes: number;
  pieces: number;
  /** Seconds to index the corpus as `corpus build` does, streamed (making the synthetic pieces not counted)… */
  buildSeconds: number;
  /** …and the process's peak resident memory by then, MB (the build's own in a --large run, its only corpus). */
  buildPeakMB: number;
  /** Seconds a fresh process takes to open the index ready to match (chromatic), as `--corpus FILE` does (the median of three)… */
  loadSeconds: number;
  /** …its resident memory then, MB… */
  loadedMB: number;
  /** …and the seconds it then takes to read every piece's points, as a session touching every piece would over its course (a file read piece by piece; 0 for one read whole at once). */
  everyPieceSeconds: number;
  /** Seconds from starting `earwitness listen --corpus FILE` to its listening line (the median of three). */
  listenStartSeconds: number;
  indexBytesPerNote: number;
  residentMB: number;
  modes: ModeRow[];
  /** Live path per note (add, expire to the last 16 beats, best with distinctiveness), CPU time, per mode. */
  /** CPU per note until the match is known; `collectMs`: the mean CPU per note of the collection after it, off the note's path as in the scoring worker. */
  live: { mode: string; p50Ms: number; p99Ms: number; maxMs: number; collectMs: number; notes: number }[];
  /** A one-hour session (about 30,000 notes) reviewed through the index at tolerance 0.1, distinctiveness counted. */
  review?: { notes: number; windows: number; seconds: number; cpuSeconds: number };
}

const ms = (t0: number): number => performance.now() - t0;
const cpuMs = (): number => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
};
const round = (x: number, digits = 3): number => Math.round(x * 10 ** digits) / 10 ** digits;
const latency = (xs: number[]): Latency => {
  const s = [...xs].sort((a, b) => a - b);
  return { p50Ms: round(percentile(s, 50)), p99Ms: round(percentile(s, 99)), windows: xs.length };
};

function sortedUnique(points: Point[]): Point[] {
  points.sort(comparePoints);
  return points.filter((p, i) => i === 0 || comparePoints(points[i - 1], p) !== 0);
}

/** Queries of each kind, passages of QUERY_BEATS beats, and their windows. */
function queries(corpus: readonly Point[][], perKind: number, seed: number): { played: Point[][]; probes: Probe[] } {
  const rand = seededRandom(seed);
  const cut = (change: { alter?: number; jitter?: number; drop?: number; scale?: number }): { points: Point[]; source: Probe['source'] } => {
    const piece = Math.floor(rand() * corpus.length);
    const points = corpus[piece];
    const scale = change.scale ?? 1;
    const beats = QUERY_BEATS / scale;
    const last = points[points.length - 1].at;
    const from = Math.floor((rand() * Math.max(0, last - toGrains(beats))) / toGrains(1)) * toGrains(1);
    const transpose = 1 + Math.floor(rand() * 11) - 5;
    const kept = points.filter((p) => p.at >= from && p.at < from + toGrains(beats) && rand() >= (change.drop ?? 0));
    const moved = kept.map((p) => ({
      at: Math.max(0, Math.round((p.at - from) * scale + (2 * rand() - 1) * toGrains(change.jitter ?? 0))),
      pitch: p.pitch + transpose + (rand() < (change.alter ?? 0) ? (rand() < 0.5 ? -1 : 1) * (1 + Math.floor(rand() * 2)) : 0),
    }));
    return { points: sortedUnique(moved), source: { piece, scale } };
  };
  const played: Point[][] = [];
  const probes: Probe[] = [];
  for (let q = 0; q < perKind; q++) {
    const made: Record<Kind, { points: Point[]; source: Probe['source'] }> = {
      verbatim: cut({}),
      altered: cut({ alter: 0.2 }),
      played: cut({ jitter: 0.06, drop: 0.1 }),
      tempo: cut({ scale: SCALES[q % SCALES.length] }),
      unrelated: { points: unrelated(seed * 1000 + q, QUERY_BEATS), source: null },
    };
    for (const kind of KINDS) {
      const { points, source } = made[kind];
      played.push(points);
      for (const w of windows(points, { window: W, hop: HOP })) probes.push({ kind, source, points: w.points, startGrains: toGrains(w.start) });
    }
  }
  return { played, probes };
}

/** Notes as `corpus build` would store them for bare points: the bench's corpora have no durations or spelling. */
function notesOfPoints(flat: FlatPoints): FlatNotes {
  const n = flat.at.length;
  return {
    offsets: flat.offsets,
    at: flat.at,
    duration: new Int32Array(n).fill(toGrains(0.5)),
    pitch: flat.pitch,
    morph: flat.pitch,
    velocity: new Uint8Array(n).fill(80),
    channel: new Uint8Array(n).fill(1),
  };
}

const pieceInfo = (i: number): CorpusPoints['pieces'][number] => ({ path: `p${i}.mid`, title: null, beats: 0, key: { tonic: 'C', mode: 'major', fifths: 0, correlation: 0 }, notes: [] });

/** Pieces handed to the index writer at a time. */
const BATCH = 64;

/**
 * The corpus indexed as `corpus build` indexes it (streamed: pieces to spill
 * files as they come, then the file written), and the queries cut from its
 * first `keep` pieces; the Point objects of the rest are let go as soon as
 * they are indexed, so a corpus larger than memory can be benchmarked.
 */
async function buildIndex(file: string, pieces: Iterable<Point[]>, options: { perKind: number; keep: number }): Promise<{ pieces: number; seconds: number; played: Point[][]; probes: Probe[] }> {
  const t0 = performance.now();
  let making = 0;
  const builder = new IndexBuilder(file, { percussion: false });
  const kept: Point[][] = [];
  let batch: Point[][] = [];
  let count = 0;
  const made = pieces[Symbol.iterator]();
  const flush = (): void => {
    const infos = batch.map((_, i) => pieceInfo(count - batch.length + i)).map(({ notes: _, ...info }) => info);
    builder.add(infos, notesOfPoints(flattenPoints({ mode: 'chromatic', pieces: infos.map((info) => ({ ...info, notes: [] })), points: batch })));
    batch = [];
  };
  for (;;) {
    const m0 = performance.now();
    const next = made.next();
    making += ms(m0);
    if (next.done) break;
    const piece = next.value;
    if (kept.length < options.keep) kept.push(piece);
    batch.push(piece);
    count++;
    if (batch.length === BATCH) flush();
  }
  if (batch.length) flush();
  await builder.finish({ files: [] });
  return { pieces: count, seconds: (ms(t0) - making) / 1000, ...queries(kept, options.perKind, 7) };
}

interface FreshLoad {
  seconds: number;
  residentMB: number;
  everyPieceSeconds: number;
}

/** A fresh process opening the index ready to match, as `--corpus FILE` does (CorpusRow's loadSeconds, loadedMB, everyPieceSeconds). */
function freshLoad(file: string): FreshLoad {
  const dist = join(import.meta.dirname, '../..');
  const script = `
    const { openCorpus } = await import(${JSON.stringify(join(dist, 'bridge/corpus/open-corpus.js'))});
    const t = performance.now();
    const { flat } = openCorpus(${JSON.stringify(file)}).matchCorpus('chromatic');
    const seconds = (performance.now() - t) / 1000;
    const residentMB = process.memoryUsage().rss / 2 ** 20;
    const e = performance.now();
    for (let p = 0; p < flat.offsets.length - 1; p++) flat.ensure?.(p);
    process.stdout.write(JSON.stringify({ seconds, residentMB, everyPieceSeconds: (performance.now() - e) / 1000 }));`;
  const r = spawnSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`loading ${file} in a fresh process failed: ${r.stderr}`);
  return JSON.parse(r.stdout) as FreshLoad;
}

/** Seconds from starting `earwitness listen --corpus FILE` (jam, OSC in, a session log of its own) to its listening line. */
async function listenStart(file: string, dir: string): Promise<number> {
  const cli = join(import.meta.dirname, '../../bridge/cli.js');
  const t = performance.now();
  const child = spawn(process.execPath, [cli, 'listen', '--corpus', file, '--preset', 'jam', '--input', 'osc', '--osc-port', '0', '--http-port', '0', '--log', join(dir, 'sessions.db')], { stdio: ['ignore', 'pipe', 'pipe'] });
  let [out, err] = ['', ''];
  child.stderr.on('data', (d: Buffer) => (err += d.toString()));
  const seconds = await new Promise<number>((resolve, reject) => {
    child.stdout.on('data', (d: Buffer) => {
      out += d.toString();
      if (/listening osc=/.test(out)) resolve((performance.now() - t) / 1000);
    });
    child.on('exit', (code) => reject(new Error(`listen --corpus ${file} stopped (${code}) before listening: ${err}`)));
  });
  const exited = once(child, 'exit');
  child.kill('SIGINT');
  await exited;
  return seconds;
}

const timed = (m: WindowMatcher, p: Probe): { ms: number; match: WindowMatch | null } => {
  const t = performance.now();
  const match = m.best(p);
  return { ms: ms(t), match };
};

/** A copy at another tempo counts as found when its piece comes back with the time scale within 2%. */
const tempoFound = (p: Probe, m: WindowMatch | null): boolean => !!p.source && !!m && m.piece === p.source.piece && Math.abs((m.timeScale ?? 1) / p.source.scale - 1) < 0.02;

/** The index row and the reference row of one mode on its probes. */
function modeRows(corpus: MatchCorpus, probes: readonly Probe[], mode: MatchMode, name: string, referenceSeconds: number): ModeRow[] {
  // Matching alone, index and reference side by side (distinctiveness does not change a score)…
  const index = windowMatcher(corpus, { windowBeats: W, mode, candidates: 'index', distinctiveness: false });
  for (const p of probes.slice(0, 20)) index.best(p); // warm up the JIT
  const indexed = probes.map((p) => timed(index, p));
  /** Windows per CPU second over whole passes until three seconds of CPU have gone by: one pass is too short to time, and one second varies with the machine. */
  const throughput = (m: WindowMatcher): number => {
    let passes = 0;
    const c0 = cpuMs();
    while (cpuMs() - c0 < 3000 || passes === 0) {
      for (const p of probes) m.best(p);
      passes++;
    }
    return (passes * probes.length) / ((cpuMs() - c0) / 1000);
  };
  const windowsPerCpuSecond = throughput(index);
  // …and what a report pays: matching with distinctiveness counted through the index.
  // Warmed by a whole pass, as the matching alone was by its timed one: what either first reads from disk is read before timing.
  const report = windowMatcher(corpus, { windowBeats: W, mode, candidates: 'index' });
  for (const p of probes) report.best(p);
  const reportPerCpuSecond = throughput(report);
  // The reference, round-robin over the kinds until its time budget is spent.
  const reference = windowMatcher(corpus, { windowBeats: W, mode, candidates: 'every', distinctiveness: false });
  const kinds = [...new Set(probes.map((p) => p.kind))];
  const byKind = kinds.map((k) => probes.map((p, i) => ({ p, i })).filter(({ p }) => p.kind === k));
  const sampled: { i: number; ms: number; score: number }[] = [];
  const t0 = performance.now();
  const refCpu0 = cpuMs();
  // A budget of 0 skips the reference (a large corpus, figures of the index alone); any other budget scores at least one window.
  for (let r = 0; referenceSeconds > 0 && r < probes.length && (sampled.length === 0 || ms(t0) < referenceSeconds * 1000); r++) {
    for (const xs of byKind) {
      if (xs[r] && (sampled.length === 0 || ms(t0) < referenceSeconds * 1000)) {
        const { ms: took, match } = timed(reference, xs[r].p);
        sampled.push({ i: xs[r].i, ms: took, score: match?.score ?? 0 });
      }
    }
  }
  const refPerCpuSecond = sampled.length / ((cpuMs() - refCpu0) / 1000);
  const recallAt = (theta: number) => {
    const strong = sampled.filter((s) => s.score >= theta);
    return { share: strong.length ? round(strong.filter((s) => (indexed[s.i].match?.score ?? 0) >= s.score - 1e-12).length / strong.length, 4) : null, windows: strong.length };
  };
  const tempo = mode.tempoFree ? probes.map((p, i) => ({ p, i })).filter(({ p }) => p.kind === 'tempo') : [];
  // A copy's last window reaches past its end, so its excerpt holds notes the copy lacks: only whole windows score 1.
  const whole = (p: Probe): boolean => p.kind === 'verbatim' && p.startGrains + toGrains(W) <= toGrains(QUERY_BEATS);
  const verbatim = probes.map((p, i) => ({ p, i })).filter(({ p }) => whole(p));
  const sameWindows = latency(sampled.map((s) => indexed[s.i].ms));
  const refLatency = latency(sampled.map((s) => s.ms));
  const base = { mode: name };
  const rows: ModeRow[] = [
    {
      ...base,
      candidates: 'index',
      latency: latency(indexed.map((x) => x.ms)),
      windowsPerCpuSecond: Math.round(windowsPerCpuSecond),
      reportWindowsPerCpuSecond: Math.round(reportPerCpuSecond),
      speedup: sampled.length ? round(refLatency.p50Ms / sameWindows.p50Ms, 1) : null,
      recall: { atLeast05: recallAt(0.5), atLeast03: recallAt(0.3) },
      aboveReference: sampled.filter((s) => (indexed[s.i].match?.score ?? 0) > s.score + 1e-12).length,
      verbatimFound: { found: verbatim.filter(({ i }) => (indexed[i].match?.score ?? 0) >= 1 - 1e-12).length, windows: verbatim.length },
      ...(mode.tempoFree ? { tempo: { found: tempo.filter(({ p, i }) => tempoFound(p, indexed[i].match)).length, windows: tempo.length } } : {}),
    },
    { ...base, candidates: 'every', latency: refLatency, windowsPerCpuSecond: Math.round(refPerCpuSecond), reportWindowsPerCpuSecond: null, speedup: 1, recall: { atLeast05: { share: 1, windows: 0 }, atLeast03: { share: 1, windows: 0 } }, aboveReference: 0, verbatimFound: { found: sampled.filter((x) => whole(probes[x.i]) && x.score >= 1 - 1e-12).length, windows: sampled.filter((x) => whole(probes[x.i])).length } },
  ];
  return sampled.length ? rows : rows.slice(0, 1);
}

/**
 * Every query played back to back, 4 beats apart, one note at a time into the
 * live matcher as the scoring worker runs it (bridge/daemon/live-scorer.ts:
 * warmed up after loading, its vote tables sized for a long window, its
 * garbage collected after each verdict): CPU time per note, and the
 * collection's apart.
 */
function liveRow(corpus: MatchCorpus & { index: NonNullable<MatchCorpus['index']> }, played: readonly Point[][], mode: MatchMode, name: string): CorpusRow['live'][number] {
  const live = new LiveMatcher(corpus, { windowBeats: W, mode, tableBits: LIVE_TABLE_BITS });
  live.warmUp();
  const collect = idleCollector();
  const perNote: number[] = [];
  let collecting = 0;
  const window: Point[] = [];
  played.forEach((query, q) => {
    const offset = q * toGrains(QUERY_BEATS + 4);
    for (const pt of query) {
      const p = { at: pt.at + offset, pitch: pt.pitch };
      const c = cpuMs();
      window.push(p);
      while (window[0].at <= p.at - toGrains(W)) window.shift();
      live.add(p);
      live.expire(window[0].at);
      live.best({ points: window, startGrains: window[0].at });
      const verdict = cpuMs();
      perNote.push(verdict - c);
      collect();
      collecting += cpuMs() - verdict;
    }
  });
  const s = [...perNote].sort((a, b) => a - b);
  return { mode: name, p50Ms: round(percentile(s, 50)), p99Ms: round(percentile(s, 99)), maxMs: round(s[s.length - 1]), collectMs: round(collecting / s.length), notes: s.length };
}

/** A one-hour session at 120 beats a minute (7,200 beats, about 30,000 notes): the queries end to end, again and again, reviewed at tolerance 0.1. */
function reviewRow(corpus: MatchCorpus, pieces: number, played: readonly Point[][]): NonNullable<CorpusRow['review']> {
  const notes: { onset: number; duration: number; pitch: number; morph: number; velocity: number; channel: number }[] = [];
  for (let at = 0, q = 0; at < 7_200; q++) {
    const query = played[q % played.length];
    for (const p of query) notes.push({ onset: at + p.at / toGrains(1), duration: 0.5, pitch: p.pitch, morph: p.pitch, velocity: 80, channel: 1 });
    at += QUERY_BEATS + 4;
  }
  const matcher = windowMatcher(corpus, { windowBeats: W, mode: { tolerance: 0.1, tempoFree: false }, candidates: 'index' });
  // The report reads only the pieces' names and the pitch dimension; matching reads `corpus`.
  const view: CorpusPoints = { mode: 'chromatic', pieces: Array.from({ length: pieces }, (_, i) => pieceInfo(i)), points: [], size: 0 };
  const t0 = performance.now();
  const c0 = cpuMs();
  const r = originalityReport([{ file: 'session', notes }], view, matcher, { window: W, hop: HOP });
  return { notes: notes.length, windows: r.windows + r.tooShort, seconds: round(ms(t0) / 1000, 2), cpuSeconds: round((cpuMs() - c0) / 1000, 2) };
}

async function benchCorpus(name: string, make: () => Iterable<Point[]>, options: { perKind: number; referenceSeconds: number; review: boolean; keep?: number }): Promise<CorpusRow> {
  const dir = mkdtempSync(join(tmpdir(), 'ew-bench-'));
  const file = join(dir, 'index');
  try {
    const built = await buildIndex(file, make(), { perKind: options.perKind, keep: options.keep ?? Infinity });
    const { played, probes, pieces } = built;
    // The build's own peak: it runs first in a --large run, whose only corpus this is.
    const buildPeakMB = Math.round(process.resourceUsage().maxRSS / 1024);
    const bytes = statSync(file).size;
    // The median of three: the first read of a file just written can wait on the disk, as a user's load (long after the build) does not.
    const load = [freshLoad(file), freshLoad(file), freshLoad(file)].sort((a, b) => a.seconds - b.seconds)[1];
    const listening: number[] = [];
    for (let i = 0; i < 3; i++) listening.push(await listenStart(file, dir));
    const read = readIndexFile(file, ['chromatic'], { deferNotes: true, onDemand: true });
    const flat = read.points?.('chromatic') ?? notePoints(read.notes, 'chromatic');
    const corpus = { flat, index: corpusIndex({ ...read.postings.chromatic!, points: flat, shape: read.shape }), fingerprints: read.fingerprints.chromatic as () => StoredFingerprints };
    const table = corpus.fingerprints();
    const withTable = { ...corpus, fingerprints: () => table };
    const rows = BENCH_MODES.flatMap((m) =>
      modeRows(withTable, probes.filter((p) => m.kinds.includes(p.kind)), m.mode, m.name, options.referenceSeconds * m.referenceShare),
    );
    const live = BENCH_MODES.map((m) => liveRow(withTable, played, m.mode, m.name));
    return {
      corpus: name,
      notes: flat.at.length,
      pieces,
      buildSeconds: round(built.seconds, 2),
      buildPeakMB,
      loadSeconds: round(load.seconds, 3),
      loadedMB: Math.round(load.residentMB),
      everyPieceSeconds: round(load.everyPieceSeconds, 3),
      listenStartSeconds: round(listening.sort((a, b) => a - b)[1], 3),
      indexBytesPerNote: round(bytes / flat.at.length, 1),
      residentMB: Math.round(process.memoryUsage().rss / 2 ** 20),
      modes: rows,
      live,
      ...(options.review ? { review: reviewRow(withTable, pieces, played) } : {}),
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** The whole JSB chorale dataset (all splits), decoded per its README, as point sets. */
function jsbCorpus(): Point[][] {
  const data = JSON.parse(readFileSync(JSB, 'utf8')) as Record<string, number[][][]>;
  return Object.values(data).flat().map((steps) => sortedUnique(decodeChorale(steps).map((n) => ({ at: toGrains(n.onset), pitch: n.pitch }))));
}

function table(r: CorpusRow): string {
  const pct = (x: number | null): string => (x === null ? '—' : `${round(100 * x, 1)}%`);
  const lines = [
    `${r.corpus}: ${r.notes} notes in ${r.pieces} pieces`,
    `  build ${r.buildSeconds} s, peak ${r.buildPeakMB} MB resident (notes, triples and fingerprints, both pitch dimensions, streamed and written), load ${r.loadSeconds} s (${r.loadedMB} MB resident then; every piece's points read after in ${r.everyPieceSeconds} s), listen listening after ${r.listenStartSeconds} s, ${r.indexBytesPerNote} bytes/note on disk, resident ${r.residentMB} MB`,
    '  | mode | candidates | p50 | p99 | windows | per CPU second | with distinctiveness | speed-up | recall ≥ 0.5 | above reference | verbatim copies scored 1 | tempo copies found |',
    '  | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |',
    ...r.modes.map(
      (m) =>
        `  | ${m.mode} | ${m.candidates} | ${m.latency.p50Ms} ms | ${m.latency.p99Ms} ms | ${m.latency.windows} | ${m.windowsPerCpuSecond} | ${m.reportWindowsPerCpuSecond ?? "—"} | ${m.speedup ?? '—'}× | ` +
        `${m.candidates === 'every' ? '—' : `${pct(m.recall.atLeast05.share)} of ${m.recall.atLeast05.windows}`} | ${m.candidates === 'every' ? '—' : m.aboveReference} | ${m.verbatimFound.found} of ${m.verbatimFound.windows} | ${m.tempo ? `${m.tempo.found} of ${m.tempo.windows}` : '—'} |`,
    ),
    ...r.live.map((l) => `  live per note, ${l.mode}: CPU p50 ${l.p50Ms} ms, p99 ${l.p99Ms} ms, max ${l.maxMs} ms (${l.notes} notes); collecting after each, ${l.collectMs} ms a note`),
  ];
  if (r.review) lines.push(`  review of a one-hour session (${r.review.notes} notes, ${r.review.windows} windows) at tolerance 0.1: ${r.review.seconds} s (${r.review.cpuSeconds} s CPU)`);
  return lines.join('\n');
}

async function main(): Promise<void> {
  const quick = process.argv.includes('--quick');
  const began = performance.now();
  const corpora: CorpusRow[] = [];
  // `--large`: the 100M row alone (`--large-notes N` for another size): queries cut from its first pieces, no reference (days of brute force).
  const large = process.argv.includes('--large');
  const largeNotes = process.argv.includes('--large-notes') ? Number(process.argv[process.argv.indexOf('--large-notes') + 1]) : 100_000_000;
  const plan: { name: string; make: () => Iterable<Point[]>; needs?: string; perKind: number; referenceSeconds: number; review: boolean; keep?: number }[] = large
    ? [{ name: `synthetic ${largeNotes >= 1e6 ? `${largeNotes / 1e6}M` : largeNotes}`, make: () => synthPieces({ notes: largeNotes, seed: 4 }), perKind: 12, referenceSeconds: 0, review: false, keep: 2_000 }]
    : [
        { name: 'synthetic 100k', make: () => synthPieces({ notes: 100_000, seed: 1 }), perKind: quick ? 4 : 12, referenceSeconds: quick ? 6 : 150, review: false },
        { name: 'synthetic 1M', make: () => synthPieces({ notes: 1_000_000, seed: 2 }), perKind: quick ? 4 : 12, referenceSeconds: quick ? 3 : 300, review: true },
      ];
  if (!quick && !large) {
    plan.push({ name: 'synthetic 10M', make: () => synthPieces({ notes: 10_000_000, seed: 3 }), perKind: 12, referenceSeconds: 400, review: false });
    plan.push({ name: 'JSB chorales', make: jsbCorpus, needs: JSB, perKind: 12, referenceSeconds: 120, review: false });
  }
  // `--only NAME` runs one corpus of the plan; `--reference-seconds N` gives the reference N seconds a corpus instead.
  const only = process.argv.includes('--only') ? process.argv[process.argv.indexOf('--only') + 1] : null;
  const referenceSeconds = process.argv.includes('--reference-seconds') ? Number(process.argv[process.argv.indexOf('--reference-seconds') + 1]) : null;
  for (const step of plan.filter((p) => only === null || p.name.endsWith(only))) {
    if (referenceSeconds !== null) step.referenceSeconds = referenceSeconds;
    if (step.needs && !existsSync(step.needs)) {
      process.stdout.write(`${step.name}: skipped, ${step.needs} is not here\n\n`);
      continue;
    }
    const row = await benchCorpus(step.name, step.make, step);
    corpora.push(row);
    process.stdout.write(table(row) + '\n\n');
  }
  const jsbModes = quick || large || only !== null ? [] : jsbModeCosts(40);
  if (jsbModes.length) process.stdout.write(`Matching modes on the JSB subset (40 corpus chorales), distinctiveness counted:\n${modeCostTable(jsbModes)}\n\n`);
  const summary = {
    quick,
    large,
    date: new Date().toISOString(),
    seconds: Math.round(ms(began) / 1000),
    loadAverage: loadavg().map((x) => round(x, 2)),
    filter: DEFAULT_FILTER,
    triples: CORPUS_TRIPLES,
    fingerprint: FINGERPRINT_SHAPE,
    fingerprintVotes: DEFAULT_FINGERPRINT,
    peakResidentMB: Math.round(process.resourceUsage().maxRSS / 1024),
    corpora,
    jsbModes,
  };
  process.stdout.write(JSON.stringify(summary) + '\n');
  // The results file tabulates rows of plain fields: a column per corpus, and one per (corpus × mode × candidates).
  const { corpora: _, jsbModes: __, ...run } = summary;
  const rows = corpora.map(({ modes: _m, live, ...c }) => ({ ...c, live: Object.fromEntries(live.map(({ mode, ...l }) => [mode, l])) }));
  const modes = [
    ...corpora.flatMap((c) => c.modes.map((m) => ({ ...m, mode: `${c.corpus} · ${m.mode} · ${m.candidates}` }))),
    ...jsbModes.map((m) => ({ ...m, mode: `JSB subset · ${m.mode} · ${m.candidates}` })),
  ];
  process.stderr.write(`results added to ${recordResults({ ...run, rows, modes })}\n`);
}

// The live rows collect garbage between notes as the scoring worker does, which needs the engine's collector: run again with it.
if (typeof (globalThis as { gc?: unknown }).gc !== 'function') process.exit(spawnSync(process.execPath, [...process.execArgv, '--expose-gc', ...process.argv.slice(1)], { stdio: 'inherit' }).status ?? 1);
await main();

/**
 * The corpus index benchmark: `npm run bench` (all corpora, tens of
 * minutes) or `npm run bench -- --quick` (100k and 1M notes, under a
 * minute). Deterministic corpora and queries; timings are wall-clock on
 * whatever else the machine is doing (the load average is printed beside
 * them). Prints a table per corpus, then as its last line one JSON object
 * with every figure, which it also adds to test/bench/RESULTS.md.
 *
 * Each corpus: build the index (both pitch dimensions, as `corpus build`
 * does) and write it to a file, load it back, then score the same 16-beat
 * windows (hop 8) of three kinds of query — verbatim transposed copies of
 * corpus passages, copies with 20% of their notes altered, unrelated
 * material — with the index and with the brute-force reference side by side,
 * the reference on as many windows as its time budget allows. Streaming:
 * all the queries played back to back into one StreamingMatch, one note at
 * a time (add, expire to the last 16 beats, best).
 *
 * Rows are per matching mode (here "exact", the index's), so other modes can
 * add rows of their own; the JSB chorale rows of test/bench/modes.ts follow
 * in the full run.
 *
 * @example
 *   npm run bench -- --quick
 *   // …tables…
 *   // {"quick":true,"rows":[{"corpus":"synthetic 100k","mode":"exact","notes":100123,...}, ...]}
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { type Point, comparePoints, toGrains } from '../../core/note.js';
import type { CorpusPoints } from '../../core/corpus.js';
import { type WindowMatcher, exactMatcher } from '../../core/match.js';
import { windows } from '../../core/windows.js';
import { percentile, seededRandom } from '../../core/stats.js';
import { type FlatNotes, notePoints } from '../../core/flat-notes.js';
import { type FlatPoints, CORPUS_TRIPLES, buildTriples, corpusIndex, flattenPoints, piecePoints } from '../../core/triple-index.js';
import { DEFAULT_FILTER, indexMatcher } from '../../core/index-match.js';
import { StreamingMatch } from '../../core/stream.js';
import { readIndexFile, writeIndexFile } from '../../bridge/formats/index-file.js';
import { decodeChorale } from '../helpers/jsb.js';
import { recordResults } from './results.js';
import { synthCorpus, unrelated } from './synthetic.js';
import { jsbModeCosts, modeCostTable } from './modes.js';

const W = 16;
const HOP = 8;
const QUERY_BEATS = 48;
const JSB = join(import.meta.dirname, '../../../../shared/data/jsb-chorales/Jsb16thSeparated.json');

type Kind = 'verbatim' | 'altered' | 'unrelated';
const KINDS: Kind[] = ['verbatim', 'altered', 'unrelated'];

interface Probe {
  kind: Kind;
  points: Point[];
  start: number;
}

interface Latency {
  p50Ms: number;
  p99Ms: number;
  windows: number;
}

export interface BenchRow {
  corpus: string;
  /** The matching mode the row measures. */
  mode: string;
  notes: number;
  pieces: number;
  buildSeconds: number;
  loadSeconds: number;
  indexBytesPerNote: number;
  residentMB: number;
  index: Latency;
  exact: Latency;
  speedup: number;
  batchWindowsPerSecond: number;
  /** The same per second of this process's CPU time: what an otherwise idle machine would show. */
  batchWindowsPerCpuSecond: number;
  /** Per note: add, expire to the last 16 beats, best; wall clock, and this process's CPU time (`cpu`). */
  stream: { p50Ms: number; p99Ms: number; maxMs: number; cpuP50Ms: number; cpuP99Ms: number; notes: number };
  recall: { atLeast05: { share: number | null; windows: number }; atLeast03: { share: number | null; windows: number } };
  /** Windows where the index scored above exact: must be 0. */
  aboveExact: number;
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

/** Queries of each kind, passages of QUERY_BEATS beats from beat 0, and their windows. */
function queries(corpus: readonly Point[][], perKind: number, seed: number): { played: Point[][]; probes: Probe[] } {
  const rand = seededRandom(seed);
  const passage = (alter: number): Point[] => {
    const piece = corpus[Math.floor(rand() * corpus.length)];
    const last = piece[piece.length - 1].at;
    const from = Math.floor((rand() * Math.max(0, last - toGrains(QUERY_BEATS))) / toGrains(1)) * toGrains(1);
    const transpose = 1 + Math.floor(rand() * 11) - 5;
    return sortedUnique(
      piece
        .filter((p) => p.at >= from && p.at < from + toGrains(QUERY_BEATS))
        .map((p) => ({ at: p.at - from, pitch: p.pitch + transpose + (rand() < alter ? (rand() < 0.5 ? -1 : 1) * (1 + Math.floor(rand() * 2)) : 0) })),
    );
  };
  const played: Point[][] = [];
  const probes: Probe[] = [];
  for (let q = 0; q < perKind; q++) {
    const made: Record<Kind, Point[]> = { verbatim: passage(0), altered: passage(0.2), unrelated: unrelated(seed * 1000 + q, QUERY_BEATS) };
    for (const kind of KINDS) {
      played.push(made[kind]);
      for (const w of windows(made[kind], { window: W, hop: HOP })) probes.push({ kind, points: w.points, start: toGrains(w.start) });
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

/** The corpus as flat notes, and the queries cut from it; the Point objects are left behind so they cannot slow what follows. */
function prepare(make: () => Point[][], perKind: number): { notes: FlatNotes; pieces: number; played: Point[][]; probes: Probe[] } {
  const corpus = make();
  const notes = notesOfPoints(flattenPoints({ mode: 'chromatic', pieces: corpus.map((_, i) => pieceInfo(i)), points: corpus }));
  return { notes, pieces: corpus.length, ...queries(corpus, perKind, 7) };
}

/** Seconds a fresh process takes to load the index (chromatic postings) ready to match, as `--corpus FILE` does. */
function freshLoadSeconds(file: string): number {
  const dist = join(import.meta.dirname, '../..');
  const script = `
    const { readIndexFile } = await import(${JSON.stringify(join(dist, 'bridge/formats/index-file.js'))});
    const { notePoints } = await import(${JSON.stringify(join(dist, 'core/flat-notes.js'))});
    const { corpusIndex } = await import(${JSON.stringify(join(dist, 'core/triple-index.js'))});
    const t = performance.now();
    const read = readIndexFile(${JSON.stringify(file)}, ['chromatic'], { deferNotes: true });
    corpusIndex({ ...read.postings.chromatic, points: notePoints(read.notes, 'chromatic'), shape: read.shape });
    process.stdout.write(String((performance.now() - t) / 1000));`;
  const r = spawnSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`loading ${file} in a fresh process failed: ${r.stderr}`);
  return Number(r.stdout);
}

function benchCorpus(name: string, make: () => Point[][], options: { perKind: number; exactSeconds: number }): BenchRow {
  const { notes, pieces, played, probes } = prepare(make, options.perKind);
  const dir = mkdtempSync(join(tmpdir(), 'ew-bench-'));
  const file = join(dir, 'index');
  try {
    let t0 = performance.now();
    writeIndexFile(file, {
      shape: CORPUS_TRIPLES,
      percussion: false,
      pieces: Array.from({ length: pieces }, (_, i) => pieceInfo(i)).map(({ notes: _, ...info }) => info),
      files: [],
      notes,
      postings: { chromatic: buildTriples(notePoints(notes, 'chromatic')), morphetic: buildTriples(notePoints(notes, 'morphetic')) },
    });
    const buildSeconds = ms(t0) / 1000;
    const bytes = statSync(file).size;
    // The median of three: the first read of a file just written can wait on the disk, as a user's load (long after the build) does not.
    const loadSeconds = [freshLoadSeconds(file), freshLoadSeconds(file), freshLoadSeconds(file)].sort((a, b) => a - b)[1];
    const read = readIndexFile(file, ['chromatic']);
    const index = corpusIndex({ ...read.postings.chromatic!, points: notePoints(read.notes, 'chromatic'), shape: read.shape });
    const noteCount = index.points.at.length;

    const matcher = indexMatcher(index, W);
    const timed = (m: WindowMatcher, p: Probe): { ms: number; score: number } => {
      const t = performance.now();
      const r = m.best(p.points, p.start);
      return { ms: ms(t), score: r?.score ?? 0 };
    };
    for (const p of probes.slice(0, 20)) matcher.best(p.points, p.start); // warm up the JIT
    const indexed = probes.map((p) => timed(matcher, p));
    // Throughput: whole passes over the windows until a second has gone by.
    let passes = 0;
    t0 = performance.now();
    const cpu0 = cpuMs();
    while (ms(t0) < 1000 || passes === 0) {
      for (const p of probes) matcher.best(p.points, p.start);
      passes++;
    }
    const batchWindowsPerSecond = (passes * probes.length) / (ms(t0) / 1000);
    const batchWindowsPerCpuSecond = (passes * probes.length) / ((cpuMs() - cpu0) / 1000);

    // Streaming: every query played back to back, 4 beats apart, one note at a time.
    const stream = new StreamingMatch(index, { windowBeats: W });
    const perNote: number[] = [];
    const perNoteCpu: number[] = [];
    played.forEach((query, q) => {
      const offset = q * toGrains(QUERY_BEATS + 4);
      for (const pt of query) {
        const c = cpuMs();
        const t = performance.now();
        stream.add({ at: pt.at + offset, pitch: pt.pitch });
        stream.expire(pt.at + offset - toGrains(W) + 1);
        stream.best();
        perNote.push(ms(t));
        perNoteCpu.push(cpuMs() - c);
      }
    });
    const cpuSorted = [...perNoteCpu].sort((a, b) => a - b);
    // The reference, round-robin over the kinds until its time budget is spent, on Point objects made only now.
    const points = Array.from({ length: pieces }, (_, p) => piecePoints(index.points, p));
    const exact = exactMatcher({ mode: 'chromatic', pieces: points.map((_, i) => pieceInfo(i)), points, size: noteCount }, W);
    const order = KINDS.flatMap((k) => probes.map((p, i) => ({ p, i })).filter(({ p }) => p.kind === k));
    const byKind = KINDS.map((k) => order.filter(({ p }) => p.kind === k));
    const sampled: { i: number; ms: number; score: number }[] = [];
    t0 = performance.now();
    const rounds = order.length;
    for (let r = 0; r < rounds && (sampled.length === 0 || ms(t0) < options.exactSeconds * 1000); r++) {
      for (const xs of byKind) {
        if (xs[r] && (sampled.length === 0 || ms(t0) < options.exactSeconds * 1000)) sampled.push({ i: xs[r].i, ...timed(exact, xs[r].p) });
      }
    }
    const recallAt = (theta: number) => {
      const strong = sampled.filter((s) => s.score >= theta);
      return { share: strong.length ? round(strong.filter((s) => indexed[s.i].score === s.score).length / strong.length, 4) : null, windows: strong.length };
    };
    const exactLatency = latency(sampled.map((s) => s.ms));
    const indexLatency = latency(indexed.map((s) => s.ms));
    const sameWindows = latency(sampled.map((s) => indexed[s.i].ms));

    const notesSorted = [...perNote].sort((a, b) => a - b);
    return {
      corpus: name,
      mode: 'exact',
      notes: noteCount,
      pieces,
      buildSeconds: round(buildSeconds, 2),
      loadSeconds: round(loadSeconds, 3),
      indexBytesPerNote: round(bytes / noteCount, 1),
      residentMB: Math.round(process.memoryUsage().rss / 2 ** 20),
      index: indexLatency,
      exact: exactLatency,
      speedup: round(exactLatency.p50Ms / sameWindows.p50Ms, 1),
      batchWindowsPerSecond: Math.round(batchWindowsPerSecond),
      batchWindowsPerCpuSecond: Math.round(batchWindowsPerCpuSecond),
      stream: {
        p50Ms: round(percentile(notesSorted, 50)),
        p99Ms: round(percentile(notesSorted, 99)),
        maxMs: round(notesSorted[notesSorted.length - 1]),
        cpuP50Ms: round(percentile(cpuSorted, 50)),
        cpuP99Ms: round(percentile(cpuSorted, 99)),
        notes: perNote.length,
      },
      recall: { atLeast05: recallAt(0.5), atLeast03: recallAt(0.3) },
      aboveExact: sampled.filter((s) => indexed[s.i].score > s.score + 1e-12).length,
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

function table(r: BenchRow): string {
  const f = (x: number | null): string => (x === null ? '—' : String(x));
  const pct = (x: number | null): string => (x === null ? '—' : `${round(100 * x, 1)}%`);
  return [
    `${r.corpus}: ${r.notes} notes in ${r.pieces} pieces, mode ${r.mode}`,
    `  build ${r.buildSeconds} s (both pitch dimensions, written), load ${r.loadSeconds} s, ${r.indexBytesPerNote} bytes/note on disk, resident ${r.residentMB} MB`,
    `  | per window        | index      | exact       |`,
    `  | p50               | ${f(r.index.p50Ms).padEnd(7)} ms | ${f(r.exact.p50Ms).padEnd(8)} ms |`,
    `  | p99               | ${f(r.index.p99Ms).padEnd(7)} ms | ${f(r.exact.p99Ms).padEnd(8)} ms |`,
    `  | windows           | ${String(r.index.windows).padEnd(10)} | ${String(r.exact.windows).padEnd(11)} |`,
    `  speed-up ${r.speedup}×, batch ${r.batchWindowsPerSecond} windows/s (${r.batchWindowsPerCpuSecond} per CPU second)`,
    `  streaming per note: p50 ${r.stream.p50Ms} ms, p99 ${r.stream.p99Ms} ms, max ${r.stream.maxMs} ms; CPU time p50 ${r.stream.cpuP50Ms} ms, p99 ${r.stream.cpuP99Ms} ms (${r.stream.notes} notes)`,
    `  recall at exact ≥ 0.5: ${pct(r.recall.atLeast05.share)} of ${r.recall.atLeast05.windows} windows; at ≥ 0.3: ${pct(r.recall.atLeast03.share)} of ${r.recall.atLeast03.windows}; windows above exact: ${r.aboveExact}`,
  ].join('\n');
}

function main(): void {
  const quick = process.argv.includes('--quick');
  const began = performance.now();
  const rows: BenchRow[] = [];
  const plan: { name: string; make: () => Point[][]; needs?: string; perKind: number; exactSeconds: number }[] = [
    { name: 'synthetic 100k', make: () => synthCorpus({ notes: 100_000, seed: 1 }), perKind: quick ? 4 : 12, exactSeconds: quick ? 6 : 150 },
    { name: 'synthetic 1M', make: () => synthCorpus({ notes: 1_000_000, seed: 2 }), perKind: quick ? 4 : 12, exactSeconds: quick ? 1 : 240 },
  ];
  if (!quick) {
    plan.push({ name: 'synthetic 10M', make: () => synthCorpus({ notes: 10_000_000, seed: 3 }), perKind: 12, exactSeconds: 300 });
    plan.push({ name: 'JSB chorales', make: jsbCorpus, needs: JSB, perKind: 12, exactSeconds: 120 });
  }
  for (const step of plan) {
    if (step.needs && !existsSync(step.needs)) {
      process.stdout.write(`${step.name}: skipped, ${step.needs} is not here\n\n`);
      continue;
    }
    const row = benchCorpus(step.name, step.make, step);
    rows.push(row);
    process.stdout.write(table(row) + '\n\n');
  }
  const modes = quick ? [] : jsbModeCosts(40, true);
  if (modes.length) process.stdout.write(`Matching modes on the JSB subset, built on the index's exact mode:\n${modeCostTable(modes)}\n\n`);
  const summary = {
    quick,
    seconds: Math.round(ms(began) / 1000),
    loadAverage: loadavg().map((x) => round(x, 2)),
    filter: DEFAULT_FILTER,
    triples: CORPUS_TRIPLES,
    peakResidentMB: Math.round(process.resourceUsage().maxRSS / 1024),
    rows,
    modes,
  };
  process.stdout.write(JSON.stringify(summary) + '\n');
  process.stderr.write(`results added to ${recordResults(summary as unknown as Record<string, unknown>)}\n`);
}

main();

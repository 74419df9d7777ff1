/**
 * Benchmark (not a test): how early a quote is warned about, and how often
 * the performer's own playing is, through `earwitness listen` over loopback
 * OSC. Each stream is the performer's own material with corpus passages of
 * 8, 16, 24 or 32 beats spliced in, verbatim or played (±0.06 beat, 10% of
 * notes dropped); notes go one at a time, each after the previous one's
 * `score` event, with their beats given, so every note is one evaluation.
 *
 * Material: the JSB chorales (../shared/data/jsb-chorales, open data set;
 * train and valid splits as the corpus, the test split's chorales that share
 * no 8-beat passage of 12 notes or more scoring 0.8 or more with the corpus,
 * from any sixteenth, as the performer's own: the data set harmonises many
 * tunes more than once), and the
 * synthetic corpus (test/bench/synthetic.ts; own material from another seed
 * and motif library). Each preset (jam, livecode) runs twice on the same
 * streams: as it was before recent stretches (`BEFORE` flags), then as it
 * ships.
 *
 * Streams of own playing alone come from the demo's melody generator
 * (core/markov.ts) at orders 0 and 1, trained on each corpus's top voices:
 * the idiom's intervals and rhythms, none of its passages; they count
 * false warnings only.
 *
 * Detection delay: beats from a quote's first note to the note a warning
 * was raised at; caught: a warning before the quote ends; a false warning:
 * one raised outside every quote and the window after it. The figures are
 * added to test/bench/RESULTS.md, a column per (preset, corpus, playing, rule).
 *
 *   node dist/test/bench/early.js [--beats 2400] [--synthetic-notes 100000]
 *
 * @example
 *   node dist/test/bench/early.js --beats 600
 *   // | jam | chorales | verbatim | before | p50 10 | p90 12 | caught 81% | false 10.5 / 10 min |
 */
import { createSocket } from 'node:dgram';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import osc from 'osc';
import { type Note, GRAINS_PER_BEAT, toGrains, toPoints } from '../../core/note.js';
import type { Piece } from '../../core/corpus.js';
import { percentile, seededRandom } from '../../core/stats.js';
import { generator, melodyOf, trainChain } from '../../core/markov.js';
import { windows } from '../../core/windows.js';
import { EXACT_MODE, windowMatcher } from '../../core/pipeline.js';
import { midiBytes } from '../../bridge/formats/midi-write.js';
import { liveCorpus } from '../../bridge/daemon/live-scorer.js';
import type { ScoreEvent, WarningEvent } from '../../contract/events.js';
import { type Grid, decodeChorale } from '../helpers/jsb.js';
import { pieceOf } from '../helpers/corpus.js';
import { played } from '../helpers/material.js';
import { ROOT, listen, spawnDaemon, tempDir, warmedUp } from '../helpers/daemon.js';
import { tempRoot } from '../helpers/temp-root.js';
import { synthCorpus, unrelated } from './synthetic.js';
import { recordResults } from './results.js';

const CHORALES = join(ROOT, '..', 'shared', 'data', 'jsb-chorales', 'Jsb16thSeparated.json');
/** The presets as they were before recent stretches (whole window only). */
const BEFORE: Record<string, string[]> = {
  jam: ['--threshold', '0.6', '--consecutive', '3', '--min-distinctiveness', '0', '--early-beats', ''],
  livecode: ['--threshold', '0.7', '--consecutive', '1', '--min-distinctiveness', '0', '--early-beats', ''],
};
const WINDOW: Record<string, number> = { jam: 16, livecode: 8 };
const QUOTE_BEATS = [8, 16, 24, 32];

function flag(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  const v = i < 0 ? fallback : Number(process.argv[i + 1]);
  if (!(Number.isFinite(v) && v > 0)) throw new Error(`--${name} must be a positive number, got ${process.argv[i + 1]}`);
  return v;
}

interface Quote {
  start: number;
  end: number;
}
interface Stream {
  notes: Note[];
  quotes: Quote[];
  beats: number;
}

/** Own material and quotes in turn: up to 48 beats of the next own piece, then a corpus passage of 8–32 beats, until `beats`. */
function stream(own: readonly Note[][], corpus: readonly Piece[], beats: number, playing: 'verbatim' | 'played', seed: number): Stream {
  const rand = seededRandom(seed);
  const notes: Note[] = [];
  const quotes: Quote[] = [];
  let t = 0;
  for (let k = 0; t < beats; k++) {
    const piece = own[k % own.length];
    const length = Math.min(48, Math.ceil(Math.max(...piece.map((n) => n.onset)) + 1));
    for (const n of piece) if (n.onset < length) notes.push({ ...n, onset: n.onset + t });
    t += length;
    const L = QUOTE_BEATS[Math.floor(rand() * QUOTE_BEATS.length)];
    const source = corpus[Math.floor(rand() * corpus.length)].notes;
    const span = Math.max(...source.map((n) => n.onset));
    if (span < L + 1) continue;
    const from = Math.floor(rand() * (span - L));
    let q = source.filter((n) => n.onset >= from && n.onset < from + L).map((n) => ({ ...n, onset: n.onset - from }));
    if (playing === 'played') q = played(q, { jitter: 0.06, drop: 0.1, seed: Math.floor(rand() * 1e9) });
    if (q.length === 0) continue;
    for (const n of q) notes.push({ ...n, onset: n.onset + t });
    quotes.push({ start: t, end: t + L });
    t += L;
  }
  notes.sort((a, b) => a.onset - b.onset || a.pitch - b.pitch);
  return { notes, quotes, beats: t };
}

/**
 * Own playing and nothing else: `beats` of melody from the demo's generator
 * (core/markov.ts) at `order`, trained on the corpus's top voices, so it
 * speaks the corpus's idiom note to note without holding its passages.
 */
function markovStream(corpus: readonly Piece[], beats: number, order: number, seed: number): Stream {
  const next = generator(trainChain(corpus.map((p) => melodyOf(p.notes)), order), seededRandom(seed)).next;
  const notes: Note[] = [];
  for (let t = 0; t < beats; ) {
    const e = next();
    notes.push({ onset: t, duration: e.duration, pitch: e.pitch, morph: e.pitch, velocity: 80, channel: 1 });
    // A tune's last event steps by its own length; none steps by nothing.
    t += Math.max(e.step, 1 / 12);
  }
  return { notes, quotes: [], beats };
}

function writeCorpusFolder(pieces: readonly Piece[], label: string): string {
  const dir = tempDir(label);
  for (const p of pieces) writeFileSync(join(dir, p.path), midiBytes([{ name: 'voices', channel: 1, notes: p.notes }], { title: p.path.replace('.mid', '') }));
  return dir;
}

/**
 * Chorales of the test split that share no 8-beat passage scoring ≥ 0.8 with
 * the corpus (exactly, chromatic), looked for from every sixteenth (the data
 * set's step) among passages of at least 12 notes: fewer match whole by chance.
 */
function unrelatedChorales(test: Note[][], corpus: readonly Piece[]): Note[][] {
  const m = windowMatcher(liveCorpus({ pieces: [...corpus] }), { windowBeats: 8, mode: EXACT_MODE, candidates: 'index' });
  return test.filter((notes) =>
    windows(toPoints(notes), { window: 8, hop: 0.25 })
      .filter((w) => w.points.length >= 12)
      .every((w) => (m.best({ points: w.points, startGrains: toGrains(w.start) })?.score ?? 0) < 0.8),
  );
}

interface Row {
  preset: string;
  corpus: string;
  playing: string;
  rule: 'before' | 'after';
  /** Null for a stream of own playing only (no quotes to catch). */
  p50: number | null;
  p90: number | null;
  caught: number | null;
  falsePer10Min: number;
  falseWarnings: number;
  ownMinutes: number;
  notes: number;
  latencyP50Ms: number;
  latencyP99Ms: number;
  lastEvaluationMs: number;
  loadAverage: number[];
}

async function run(dir: string, preset: string, extra: string[], s: Stream): Promise<Omit<Row, 'preset' | 'corpus' | 'playing' | 'rule'>> {
  const d = await spawnDaemon(['--corpus', dir, '--preset', preset, '--input', 'osc', ...extra], { startMs: 10 * 60_000 });
  await warmedUp(d.http);
  const events = await listen(d.http);
  const socket = createSocket('udp4');
  const latencies: number[] = [];
  const workerMs: number[] = [];
  const warnedAt: number[] = [];
  for (const [i, n] of s.notes.entries()) {
    const bytes = osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: n.pitch }, { type: 'i', value: 80 }, { type: 'f', value: n.duration }, { type: 'f', value: n.onset }] }, { metadata: true });
    const sent = performance.now();
    socket.send(bytes, d.osc, '127.0.0.1');
    await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === i + 1, 60_000);
    latencies.push(performance.now() - sent);
  }
  // A warning follows its score event at once; let the last arrive.
  await new Promise((r) => setTimeout(r, 200));
  for (const e of events.events) if (e.type === 'warning') warnedAt.push(s.notes[(e as WarningEvent).seq - 1].onset);
  socket.close();
  events.close();
  const health = (await (await fetch(`http://127.0.0.1:${d.http}/health`)).json()) as { lastEvaluationMs: number };
  workerMs.push(health.lastEvaluationMs);
  await d.stop();
  const W = WINDOW[preset];
  const delays = s.quotes.map((q) => {
    const w = warnedAt.find((at) => at >= q.start && at < q.end);
    return w === undefined ? Infinity : w - q.start;
  });
  const falses = warnedAt.filter((at) => !s.quotes.some((q) => at >= q.start && at < q.end + W));
  const ownBeats = s.beats - s.quotes.reduce((sum, q) => sum + (q.end - q.start) + W, 0);
  delays.sort((a, b) => a - b);
  latencies.sort((a, b) => a - b);
  const round = (x: number) => (Number.isFinite(x) ? Math.round(x * 100) / 100 : -1);
  const quoted = delays.length > 0;
  return {
    p50: quoted ? round(percentile(delays, 50)) : null,
    p90: quoted ? round(percentile(delays, 90)) : null,
    caught: quoted ? round(delays.filter(Number.isFinite).length / delays.length) : null,
    falsePer10Min: round((falses.length / ownBeats) * 1200),
    falseWarnings: falses.length,
    ownMinutes: round(ownBeats / 120),
    notes: s.notes.length,
    latencyP50Ms: round(percentile(latencies, 50)),
    latencyP99Ms: round(percentile(latencies, 99)),
    lastEvaluationMs: round(Math.max(...workerMs)),
    loadAverage: loadavg().map((x) => round(x)),
  };
}

async function main(): Promise<void> {
  const beats = flag('beats', 2400);
  const synthNotes = flag('synthetic-notes', 100_000);
  const sets: { name: string; dir: string; own: Note[][]; corpus: Piece[] }[] = [];
  if (existsSync(CHORALES)) {
    const data = JSON.parse(readFileSync(CHORALES, 'utf8')) as { train: Grid[]; valid: Grid[]; test: Grid[] };
    const corpus = [...data.train, ...data.valid].map((g, i) => pieceOf(`chorale-${String(i).padStart(3, '0')}.mid`, decodeChorale(g)));
    const own = unrelatedChorales(data.test.map(decodeChorale), corpus);
    process.stdout.write(`chorales: ${corpus.length} in the corpus, ${own.length} of ${data.test.length} held out as the performer's own\n`);
    sets.push({ name: 'chorales', dir: writeCorpusFolder(corpus, 'early-chorales'), own, corpus });
  } else process.stdout.write(`chorales skipped: ${CHORALES} is absent\n`);
  const synth = synthCorpus({ notes: synthNotes, seed: 1 }).map((points, i) =>
    pieceOf(`piece-${String(i).padStart(5, '0')}.mid`, points.map((p) => ({ onset: p.at / GRAINS_PER_BEAT, duration: 0.5, pitch: p.pitch, morph: p.pitch, velocity: 80, channel: 1 }))),
  );
  const synthOwn = Array.from({ length: 40 }, (_, i) => toNotes(unrelated(1000 + i, 48)));
  sets.push({ name: `synthetic ${Math.round(synthNotes / 1000)}k`, dir: writeCorpusFolder(synth, 'early-synthetic'), own: synthOwn, corpus: synth });

  const rows: Row[] = [];
  for (const set of sets) {
    for (const playing of ['verbatim', 'played', 'markov order 0', 'markov order 1'] as const) {
      const s = playing === 'verbatim' || playing === 'played' ? stream(set.own, set.corpus, beats, playing, 7) : markovStream(set.corpus, beats, Number(playing.slice(-1)), 7);
      for (const preset of ['jam', 'livecode']) {
        for (const rule of ['before', 'after'] as const) {
          const r = await run(set.dir, preset, rule === 'before' ? BEFORE[preset] : [], s);
          const row = { preset, corpus: set.name, playing, rule, ...r };
          rows.push(row);
          process.stdout.write(`| ${preset} | ${set.name} | ${playing} | ${rule} | ${r.p50 ?? '—'} | ${r.p90 ?? '—'} | ${r.caught === null ? '—' : `${(r.caught * 100).toFixed(0)}%`} | ${r.falsePer10Min} (${r.falseWarnings} in ${r.ownMinutes} min) | ${r.latencyP50Ms} / ${r.latencyP99Ms} ms | ${r.loadAverage.join(' / ')} |\n`);
        }
      }
    }
  }
  process.stdout.write(`${JSON.stringify({ bench: 'early', date: new Date().toISOString(), beats, rows })}\n`);
  // A column per row in the results file, named by what it plays.
  const columns = rows.map(({ preset, corpus, playing, rule, ...figures }) => ({ corpus: `${preset} · ${corpus} · ${playing} · ${rule}`, ...figures }));
  process.stderr.write(`results added to ${recordResults({ bench: 'early', beats, rows: columns })}\n`);
}

const toNotes = (points: readonly { at: number; pitch: number }[]): Note[] =>
  points.map((p) => ({ onset: p.at / GRAINS_PER_BEAT, duration: 0.5, pitch: p.pitch, morph: p.pitch, velocity: 80, channel: 1 }));

// The corpora and the daemons' logs go in a folder of their own, removed when the run ends.
const temp = tempRoot('bench-early');
main()
  .catch((e: Error) => {
    process.stderr.write(`early benchmark: ${e.stack ?? e.message}\n`);
    process.exitCode = 1;
  })
  .finally(() => temp.remove());

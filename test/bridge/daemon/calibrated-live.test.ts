/**
 * Played timing, distinctiveness and calibrated thresholds in the live
 * path: the warning policy's distinctiveness gate, the live scorer with a
 * tolerance, preset keys, the baseline an index stores, and the daemon as a
 * user runs it (`corpus build --baseline`, then `listen` with threshold
 * "auto"; OSC 1.0 messages from the `osc` package). Data: the daemon tests'
 * invented melodies (test/helpers/daemon.ts) and JSB chorales
 * (test/fixtures/jsb/README.md).
 */
import { spawnSync } from 'node:child_process';
import { copyFileSync, writeFileSync } from 'node:fs';
import { createSocket } from 'node:dgram';
import { join } from 'node:path';
import osc from 'osc';
import { afterAll, describe, expect, test } from 'vitest';
import { initialPolicy, stepPolicy } from '../../../core/warning-policy.js';
import { liveCorpus, liveScorer, warmingUp } from '../../../bridge/daemon/live-scorer.js';
import { warmUpPassages } from '../../../core/live-match.js';
import { notesWithin } from '../../../core/review.js';
import { toGrains } from '../../../core/note.js';
import type { GrainSpan } from '../../../core/flat-notes.js';
import { LIVE_TOLERANCE, loadPreset, parsePreset, resolveThreshold, withOverrides } from '../../../bridge/formats/presets.js';
import { INDEX_NAME, IndexFileError, readIndexBaselines } from '../../../bridge/formats/index-file.js';
import type { HelloEvent, ScoreEvent, WarningEvent } from '../../../contract/events.js';
import { CAUTION } from '../../../core/report.js';
import { EXIT } from '../../../bridge/cli/usage.js';
import { CLI, type SpawnedDaemon, listen, passage as movedPassage, spawnDaemon, tempDir, writeCorpus } from '../../helpers/daemon.js';
import { chorales, passage, played } from '../../helpers/material.js';

describe('the warning policy with a minimum distinctiveness', () => {
  const config = { threshold: 0.6, hysteresis: 0.2, minNotes: 4, consecutive: 1, warn: true, minDistinctiveness: 0.5 };
  const hot = (distinctiveness: number) => ({ score: 0.9, windowNotes: 10, passage: { piece: 1, pieceStart: 0, beats: 8 }, distinctiveness });

  test('a stock figure (distinctiveness below the minimum) never raises; a distinctive one does', () => {
    expect(stepPolicy(initialPolicy(), hot(0.2), config).actions).toEqual([]);
    expect(stepPolicy(initialPolicy(), hot(0.5), config).actions).toEqual([{ type: 'raise', passage: hot(0.5).passage }]);
  });

  test('without a minimum, or without a measured distinctiveness, nothing changes', () => {
    expect(stepPolicy(initialPolicy(), hot(0.01), { ...config, minDistinctiveness: undefined }).actions).toHaveLength(1);
    expect(stepPolicy(initialPolicy(), { ...hot(0), distinctiveness: undefined }, config).actions).toHaveLength(1);
  });
});

describe('the live scorer with a tolerance', () => {
  const { corpus } = chorales();
  const take = played(passage(corpus.pieces[8].notes, 8, 16, 1), { jitter: 0.06, drop: 0.1, seed: 3 });
  const verdictOf = (tolerance: number) => {
    const scorer = liveScorer(corpus, { windowBeats: 8, grid: 0, tolerance });
    take.forEach((n, i) => scorer.add({ ...n, seq: i + 1 }));
    return scorer.evaluate();
  };

  test('a chorale phrase played with ±0.06 beat timing: found at 0.1 beat with its distinctiveness, missed exactly', () => {
    const loose = verdictOf(0.1);
    expect(loose.match).toMatchObject({ piece: corpus.pieces[8].path });
    expect(loose.score).toBeGreaterThanOrEqual(0.7);
    expect(loose.match!.distinctiveness).toBeGreaterThan(0);
    expect(loose.match!.distinctiveness).toBeLessThanOrEqual(1);
    expect(verdictOf(0).score).toBeLessThan(loose.score);
  });

  test('its warm-up leaves nothing behind, run to the end or stopped early: a warmed scorer answers every note as a fresh one does', () => {
    const options = { windowBeats: 8, grid: 12, tolerance: 0.1, early: { lengths: [3, 4, 6], thresholds: [1, 0.95, 0.9], leftOut: 0.1, minOnsets: 6, minDistinctiveness: 0.5 } };
    const run = (scorer: ReturnType<typeof liveScorer>) => take.map((n, i) => { scorer.add({ ...n, seq: i + 1 }); return scorer.evaluate(); });
    const fresh = run(liveScorer(corpus, options));
    expect(fresh.some((v) => v.stretch !== null)).toBe(true);
    const warmed = liveScorer(corpus, options);
    let played = 0;
    for (played of warmingUp(warmed, warmUpPassages(liveCorpus(corpus).flat)));
    expect(played).toBeGreaterThan(100);
    expect(run(warmed)).toEqual(fresh);
    const stopped = liveScorer(corpus, options);
    const steps = warmingUp(stopped, warmUpPassages(liveCorpus(corpus).flat));
    for (let k = 0; k < 30; k++) steps.next();
    steps.return();
    expect(run(stopped)).toEqual(fresh);
  });

  test('a verdict\'s excerpt is read a span at a time: given notesIn, no piece\'s whole notes are made, and every verdict is as before', () => {
    const options = { windowBeats: 8, grid: 12, tolerance: 0.1 };
    const run = (scorer: ReturnType<typeof liveScorer>) => take.map((n, i) => { scorer.add({ ...n, seq: i + 1 }); return scorer.evaluate(); });
    const fresh = run(liveScorer(corpus, options));
    expect(fresh.filter((v) => v.excerpt !== null).length).toBeGreaterThan(take.length / 2);
    // Pieces whose whole notes cannot be read: the scorer must go through notesIn.
    const sealed = { pieces: corpus.pieces.map((p) => Object.defineProperty({ ...p }, 'notes', { get: () => { throw new Error(`${p.path}: whole piece read`); } })) };
    const spans: number[] = [];
    const notesIn = (piece: number, span: GrainSpan) => (spans.push(span.toGrains - span.fromGrains), notesWithin(corpus.pieces[piece].notes, span));
    expect(run(liveScorer(sealed, options, { ...liveCorpus(corpus), notesIn }))).toEqual(fresh);
    expect(spans.length).toBe(fresh.filter((v) => v.excerpt !== null).length);
    expect(Math.max(...spans)).toBe(toGrains(8));
  });
});

describe('preset keys', () => {
  test(`tolerance defaults to the measured ${LIVE_TOLERANCE} beat and minDistinctiveness to 0; the built-in presets state them`, () => {
    const p = parsePreset({ ...loadPreset('jam'), tolerance: undefined, minDistinctiveness: undefined }, 'mine.json');
    expect(p).toMatchObject({ tolerance: LIVE_TOLERANCE, minDistinctiveness: 0 });
    for (const name of ['jam', 'livecode', 'record']) expect(loadPreset(name)).toMatchObject({ tolerance: LIVE_TOLERANCE, minDistinctiveness: expect.any(Number) });
  });

  test('bad values are named with what is allowed', () => {
    const jam = loadPreset('jam');
    expect(() => parsePreset({ ...jam, tolerance: 1 }, 'mine.json')).toThrow('preset mine.json: field "tolerance": got 1; allowed: a number of beats from 0 (exact) up to, not including, 1');
    expect(() => withOverrides(jam, { minDistinctiveness: '2' })).toThrow(/--min-distinctiveness 2: allowed: a number from 0/);
    expect(() => parsePreset({ ...jam, threshold: 'high' }, 'mine.json')).toThrow(/field "threshold": got "high"; allowed: a number from 0 to 1, or "auto"/);
  });

  test('a number threshold stays as it is; "auto" without an index is a clear error', () => {
    const jam = loadPreset('jam');
    expect(resolveThreshold(jam, 'anywhere').threshold).toBe(jam.threshold);
    const dir = tempDir('no-index');
    expect(() => resolveThreshold({ ...jam, threshold: 'auto' }, dir)).toThrow(`preset jam: threshold "auto" needs the corpus's human baseline, and ${dir} has no corpus index`);
  });
});

const cli = (...args: string[]) => spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8', timeout: 120_000 });

describe('corpus build --baseline and threshold "auto", as a user runs them', () => {
  const corpus = writeCorpus();
  // The same melody under a second name: its material is then found in two places.
  copyFileSync(join(corpus.dir, 'ashfall.mid'), join(corpus.dir, 'ashfall-again.mid'));
  let build: any;
  const daemons: SpawnedDaemon[] = [];
  afterAll(async () => {
    for (const d of daemons) await d.stop();
  });

  test('stores one baseline per window asked for, and says so with the caution', () => {
    const r = cli('corpus', 'build', corpus.dir, '--baseline', '--baseline-windows', '8,16', '--baseline-samples', '4', '--json');
    expect(r.status, r.stderr).toBe(EXIT.ok);
    build = JSON.parse(r.stdout);
    expect(build.baselines.map((b: any) => b.window)).toEqual([8, 16]);
    expect(build.caution).toBe(CAUTION);
    const stored = readIndexBaselines(join(corpus.dir, INDEX_NAME));
    expect(stored.map((b) => [b.settings.window, b.settings.hop, b.samples.length])).toEqual([[8, 4, 4], [16, 8, 4]]);
    expect(stored.map((b) => b.percentiles.p99)).toEqual(build.baselines.map((b: any) => b.p99));
  });

  test('a rebuild without --baseline stores none, and "auto" then says how to get one', () => {
    const other = writeCorpus();
    expect(cli('corpus', 'build', other.dir).status).toBe(EXIT.ok);
    expect(readIndexBaselines(join(other.dir, INDEX_NAME))).toEqual([]);
    const r = cli('listen', '--corpus', other.dir, '--preset', 'livecode', '--threshold', 'auto', '--osc-port', '0', '--http-port', '0', '--log', join(tempDir('log'), 'l.db'));
    expect(r.status).toBe(EXIT.usage);
    expect(r.stderr).toContain('needs a human baseline of 8-beat windows');
    expect(r.stderr).toContain('holds no baseline; "earwitness corpus build DIR --baseline" stores one');
  });

  test('a damaged baseline section is an error naming the file', () => {
    const file = join(tempDir('damaged'), 'x.idx');
    writeFileSync(file, 'not an index');
    expect(() => readIndexBaselines(file)).toThrow(IndexFileError);
  });

  const socket = createSocket('udp4');
  afterAll(() => socket.close());
  const send = (port: number, pitch: number, beat: number, duration: number) =>
    new Promise<void>((resolve) =>
      socket.send(osc.writePacket({ address: '/ew/note', args: [{ type: 'i', value: pitch }, { type: 'i', value: 90 }, { type: 'f', value: duration }, { type: 'f', value: beat }] }, { metadata: true }), port, '127.0.0.1', () => resolve()),
    );
  /** Beats 0–12 of a corpus melody, played with up to ±0.04 beat of timing (seeded). */
  const quote = (name: string) => played(movedPassage(corpus.pieces[name], 0, 12, 0, 0), { jitter: 0.04, seed: 5 });

  test('listen --threshold auto uses the stored p99; score and warning events carry distinctiveness', async () => {
    const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode', '--threshold', 'auto']);
    daemons.push(d);
    const events = await listen(d.http);
    const hello = await events.next<HelloEvent>((e) => e.type === 'hello');
    expect(hello.preset).toMatchObject({ threshold: build.baselines[0].p99, tolerance: LIVE_TOLERANCE, minDistinctiveness: loadPreset('livecode').minDistinctiveness });
    expect(d.stdout()).toContain("(auto: the corpus baseline's p99)");
    const notes = quote('brinewater.mid');
    for (const n of notes) await send(d.osc, n.pitch, n.onset, n.duration);
    const warning = await events.next<WarningEvent>((e) => e.type === 'warning', 20_000);
    expect(warning).toMatchObject({ piece: 'brinewater.mid', distinctiveness: 1 });
    const score = await events.next<ScoreEvent>((e) => e.type === 'score' && e.piece === 'brinewater.mid');
    expect(score.distinctiveness).toBe(1);
    events.close();
  });

  test('--min-distinctiveness 1: a quote of material found in two corpus places scores, but does not warn', async () => {
    const d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode', '--threshold', 'auto', '--min-distinctiveness', '1']);
    daemons.push(d);
    const events = await listen(d.http);
    const notes = quote('ashfall.mid');
    for (const n of notes) await send(d.osc, n.pitch, n.onset, n.duration);
    const last = await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === notes.length, 20_000);
    expect(last.score).toBeGreaterThanOrEqual(build.baselines[0].p99);
    expect(last.distinctiveness).toBe(0.5);
    // A warning would follow its score event at once; give it time to arrive before looking.
    await new Promise((r) => setTimeout(r, 500));
    expect(events.events.filter((e) => e.type === 'warning')).toEqual([]);
    events.close();
  });
});

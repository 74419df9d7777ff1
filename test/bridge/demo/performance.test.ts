/**
 * What the demo's generator plays, and what the daemon makes of it, without
 * the clock: the melodies it trains on are the demo tunes' melodies as
 * presets/demo/tunes.json writes them (the MIDI files read back), and two
 * minutes of its music at the demo's settings, fed note by note through the
 * daemon's own live scorer and warning policy, quote (warnings within the
 * first minute), wander (warnings clear), and raise nothing when the chain
 * has no memory to copy with (order 0 and 1): the warnings come from
 * copying, not from chance.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { generator, trainChain } from '../../../core/markov.js';
import { seededRandom } from '../../../core/stats.js';
import { initialPolicy, stepPolicy } from '../../../core/warning-policy.js';
import { loadCorpusFolder } from '../../../bridge/corpus/corpus-files.js';
import { DEMO_ORDER, demoPreset } from '../../../bridge/cli/commands/demo.js';
import { liveScorer } from '../../../bridge/daemon/live-scorer.js';
import { MELODY_CHANNEL, demoTunes } from '../../../bridge/demo/tunes.js';
import { ROOT } from '../../helpers/daemon.js';

const CORPUS = join(ROOT, 'presets', 'demo', 'corpus');
const SOURCE = JSON.parse(readFileSync(join(ROOT, 'presets', 'demo', 'tunes.json'), 'utf8')) as {
  tunes: { title: string; file: string; notes: { onset: number; duration: number; pitch: number; channel: number }[] }[];
};
const tunes = demoTunes(CORPUS);
const { corpus } = loadCorpusFolder(CORPUS);
const preset = demoPreset(CORPUS);

/** `minutes` of the chain's music at the preset's tempo, scored after every note as the daemon scores it. */
function perform(order: number, seed: number, minutes: number) {
  const next = generator(trainChain(tunes.map((t) => t.melody), order), seededRandom(seed)).next;
  const scorer = liveScorer(corpus, { windowBeats: preset.window, grid: preset.grid, tolerance: preset.tolerance });
  let policy = initialPolicy();
  const raised: { second: number; piece: string; score: number }[] = [];
  let cleared = 0;
  let standing = 0;
  let evaluations = 0;
  for (let beat = 0, seq = 1; beat < minutes * preset.bpm; seq++) {
    const e = next();
    scorer.add({ seq, onset: beat, duration: e.duration, pitch: e.pitch, velocity: 90, channel: 1 });
    const v = scorer.evaluate();
    const step = stepPolicy(policy, { score: v.score, windowNotes: v.windowNotes, passage: v.match && { piece: v.match.pieceIndex, pieceStart: v.match.pieceStart, beats: preset.window }, distinctiveness: v.match?.distinctiveness }, preset);
    policy = step.state;
    for (const a of step.actions) {
      if (a.type === 'raise') raised.push({ second: (beat * 60) / preset.bpm, piece: v.match!.piece, score: v.score });
      else cleared++;
    }
    evaluations++;
    if (policy.standing) standing++;
    beat += e.step;
  }
  return { raised, cleared, standingShare: standing / evaluations };
}

describe('the demo generator', () => {
  it('trains on the melody of every demo tune, as tunes.json writes it', () => {
    expect(tunes.map((t) => t.title).sort()).toEqual(SOURCE.tunes.map((t) => t.title).sort());
    for (const source of SOURCE.tunes) {
      const tune = tunes.find((t) => t.title === source.title)!;
      expect(`corpus/${tune.piece}`).toBe(source.file);
      const melody = source.notes.filter((n) => n.channel === MELODY_CHANNEL).sort((a, b) => a.onset - b.onset);
      expect(tune.melody.map((e) => e.pitch)).toEqual(melody.map((n) => n.pitch));
      expect(tune.melody.map((e) => e.duration)).toEqual(melody.map((n) => n.duration));
      expect(tune.melody.slice(0, -1).map((e) => e.step)).toEqual(melody.slice(1).map((n, i) => n.onset - melody[i].onset));
    }
  });

  it.each([1, 2, 3])(`at order ${DEMO_ORDER}, seed %i: warns within the first minute, about demo tunes, and the warnings clear as it wanders`, (seed) => {
    const r = perform(DEMO_ORDER, seed, 2);
    expect(r.raised.length).toBeGreaterThanOrEqual(3);
    expect(r.raised[0].second).toBeLessThan(60);
    expect(r.cleared).toBeGreaterThanOrEqual(2);
    expect(r.standingShare).toBeLessThan(0.8);
    for (const w of r.raised) {
      expect(tunes.map((t) => t.piece)).toContain(w.piece);
      expect(w.score).toBeGreaterThanOrEqual(preset.threshold);
    }
  });

  it.each([0, 1])('at order %i (no phrase memory) raises no warning in two minutes', (order) => {
    expect(perform(order, 1, 2).raised).toEqual([]);
  });
});

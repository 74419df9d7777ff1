import { describe, expect, it } from 'vitest';
import { type Evaluation, type PolicyAction, type PolicyConfig, type PolicyState, initialPolicy, resetPolicy, samePassage, stepPolicy } from '../../core/warning-policy.js';

const config: PolicyConfig = { threshold: 0.6, hysteresis: 0.2, minNotes: 8, consecutive: 3, warn: true };
const at = (piece: number, pieceStart: number) => ({ piece, pieceStart, beats: 16 });
const ev = (score: number, passage = at(1, 8), windowNotes = 20): Evaluation => ({ score, windowNotes, passage });

/** Runs evaluations through the policy; the actions of each step, as 'raise 1@8' / 'clear 1@8'. */
function run(evals: Evaluation[], c = config, start: PolicyState = initialPolicy()) {
  let s = start;
  const steps: string[][] = [];
  for (const e of evals) {
    const r = stepPolicy(s, e, c);
    s = r.state;
    steps.push(r.actions.map((a: PolicyAction) => `${a.type} ${a.passage.piece}@${a.passage.pieceStart}`));
  }
  return { steps, state: s };
}

describe('the warning policy', () => {
  it('raises one warning after K hot evaluations in a row, naming the last one', () => {
    expect(run([ev(0.9), ev(0.9), ev(0.7, at(1, 9))]).steps).toEqual([[], [], ['raise 1@9']]);
  });

  it('a cool or in-between evaluation breaks the run', () => {
    expect(run([ev(0.9), ev(0.9), ev(0.5), ev(0.9), ev(0.9)]).steps.flat()).toEqual([]);
  });

  it('never warns on a window with fewer than minNotes notes, however high it scores', () => {
    expect(run([ev(1, at(1, 8), 7), ev(1, at(1, 8), 7), ev(1, at(1, 8), 7)]).steps.flat()).toEqual([]);
  });

  it('does not warn again while the same passage goes on, as it moves along the piece', () => {
    const evals = [ev(0.9, at(1, 8)), ev(0.9, at(1, 9)), ev(0.9, at(1, 10)), ev(0.9, at(1, 12)), ev(0.95, at(1, 20)), ev(0.9, at(1, 30))];
    expect(run(evals).steps.flat()).toEqual(['raise 1@10']);
  });

  it('clears after K evaluations below threshold − hysteresis; the band between keeps it', () => {
    const raised = run([ev(0.9), ev(0.9), ev(0.9)]).state;
    // 0.45 is below 0.6 but not below 0.4: it keeps the warning standing and breaks the cool run.
    const r = run([ev(0.3), ev(0.3), ev(0.45), ev(0.3), ev(0.3), ev(0.3)], config, raised);
    expect(r.steps).toEqual([[], [], [], [], [], ['clear 1@8']]);
    expect(r.state.standing).toBeNull();
  });

  it('after clearing, the same passage may warn again', () => {
    const evals = [ev(0.9), ev(0.9), ev(0.9), ev(0), ev(0), ev(0), ev(0.9), ev(0.9), ev(0.9)];
    expect(run(evals).steps.flat()).toEqual(['raise 1@8', 'clear 1@8', 'raise 1@8']);
  });

  it('K hot evaluations of another passage clear the standing warning and raise one for it', () => {
    const evals = [ev(0.9), ev(0.9), ev(0.9), ev(0.8, at(2, 0)), ev(0.8, at(2, 1)), ev(0.8, at(2, 2))];
    expect(run(evals).steps.flat()).toEqual(['raise 1@8', 'clear 1@8', 'raise 2@2']);
  });

  it('an excerpt of the same piece that does not overlap is another passage', () => {
    expect(samePassage(at(1, 0), at(1, 15.5))).toBe(true);
    expect(samePassage(at(1, 0), at(1, 16))).toBe(false);
    expect(samePassage(at(1, 0), at(2, 0))).toBe(false);
  });

  it('a reset clears a standing warning at once', () => {
    const raised = run([ev(0.9), ev(0.9), ev(0.9)]).state;
    expect(resetPolicy(raised).actions).toEqual([{ type: 'clear', passage: at(1, 8) }]);
    expect(resetPolicy(initialPolicy()).actions).toEqual([]);
  });

  it('with warn off nothing is ever raised', () => {
    expect(run([ev(1), ev(1), ev(1), ev(1)], { ...config, warn: false }).steps.flat()).toEqual([]);
  });

  it('with consecutive 1 the first hot evaluation warns', () => {
    expect(run([ev(0.3), ev(0.6)], { ...config, consecutive: 1 }).steps).toEqual([[], ['raise 1@8']]);
  });
});

describe('the warning policy with recent stretches', () => {
  /** A whole window scoring `score` whose judged 4-beat stretch (threshold 0.95) scored `stretchScore` on piece 2 at beat 40. */
  const withStretch = (score: number, stretchScore: number, hot = stretchScore >= 0.95): Evaluation => ({
    ...ev(score),
    stretch: { hot, passage: { piece: 2, pieceStart: 40, beats: 4 }, score: stretchScore, threshold: 0.95 },
  });

  it('a stretch that warns on its own raises at once, whatever consecutive asks of whole windows', () => {
    expect(run([withStretch(0.2, 1)]).steps).toEqual([['raise 2@40']]);
    expect(stepPolicy(initialPolicy(), withStretch(0.2, 1), config).actions).toEqual([{ type: 'raise', passage: { piece: 2, pieceStart: 40, beats: 4 }, stretch: true }]);
  });

  it('a window hot together with a stretch that warns raises at once too, naming the whole window\'s passage', () => {
    expect(run([withStretch(0.9, 1)]).steps).toEqual([['raise 1@8']]);
  });

  it('a stretch below its threshold raises nothing, and the whole window still needs K hot evaluations', () => {
    expect(run([withStretch(0.9, 0.9), withStretch(0.9, 0.9)]).steps.flat()).toEqual([]);
    expect(run([withStretch(0.9, 0.9), withStretch(0.9, 0.9), withStretch(0.9, 0.9)]).steps).toEqual([[], [], ['raise 1@8']]);
  });

  it('the standing passage\'s stretch within hysteresis of its threshold keeps the warning while the whole window is cool', () => {
    // threshold 0.95 − hysteresis 0.2 = 0.75: 0.8 holds, 0.7 does not.
    const { steps } = run([withStretch(0.1, 1), withStretch(0.1, 0.8), withStretch(0.1, 0.8), withStretch(0.1, 0.8), withStretch(0.1, 0.7), withStretch(0.1, 0.7), withStretch(0.1, 0.7)]);
    expect(steps).toEqual([['raise 2@40'], [], [], [], [], [], ['clear 2@40']]);
  });

  it('a stretch of another passage does not hold the standing warning', () => {
    const elsewhere: Evaluation = { ...ev(0.1), stretch: { hot: false, passage: { piece: 3, pieceStart: 0, beats: 4 }, score: 0.9, threshold: 0.95 } };
    expect(run([withStretch(0.1, 1), elsewhere, elsewhere, elsewhere]).steps).toEqual([['raise 2@40'], [], [], ['clear 2@40']]);
  });
});

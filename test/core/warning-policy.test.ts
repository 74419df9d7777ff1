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

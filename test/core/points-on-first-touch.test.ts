/**
 * Points read on first touch (FlatPoints `ensure`, core/triple-index.ts):
 * every core function that reads a piece's points asks for the piece first,
 * so over points that are empty until asked for it answers as over points
 * all in memory. Each function is called on points fresh from the lazy
 * source, so no other path has read the piece for it. Material: JSB
 * chorales from the open dataset (test/fixtures/jsb, source in its README).
 */
import { describe, expect, it } from 'vitest';
import { toGrains, toPoints } from '../../core/note.js';
import { corpusPoints } from '../../core/corpus.js';
import { type FlatPoints, buildTriples, corpusIndex, flattenPoints, piecePoints, readAhead } from '../../core/triple-index.js';
import { excerptLines, reachable, verifier, verifyShift } from '../../core/verify.js';
import { holdsAt, piecesHolding } from '../../core/distinctiveness.js';
import { scanBest } from '../../core/index-match.js';
import { warmUpPassages } from '../../core/live-match.js';
import { bestInPiece } from '../../core/tolerance.js';
import { chorales, passage } from '../helpers/material.js';

const { corpus } = chorales();
const whole = flattenPoints(corpusPoints(corpus, 'chromatic'));

/** The same points, empty until a piece is asked for; `touched` lists the pieces asked for. */
function lazy(): FlatPoints & { touched: Set<number> } {
  const touched = new Set<number>();
  const at = new Int32Array(whole.at.length);
  const pitch = new Uint8Array(whole.pitch.length);
  const ensure = (p: number): void => {
    if (touched.has(p)) return;
    touched.add(p);
    at.set(whole.at.subarray(whole.offsets[p], whole.offsets[p + 1]), whole.offsets[p]);
    pitch.set(whole.pitch.subarray(whole.offsets[p], whole.offsets[p + 1]), whole.offsets[p]);
  };
  return { mode: 'chromatic', offsets: whole.offsets, at, pitch, ensure, touched };
}

// Piece 6's beats 4–12, moved to start at 0: found in piece 6 at 4 beats, no transposition.
const material = toPoints(passage(corpus.pieces[6].notes, 4, 12), 'chromatic');
const span = { points: material, startGrains: 0, spanGrains: toGrains(8) };
const at6 = { piece: 6, shift: -toGrains(4), dp: 0 };

describe('points read on first touch', () => {
  const cases: [string, (flat: FlatPoints) => unknown][] = [
    ['verifyShift', (flat) => verifyShift(flat, span, 6, at6.shift, 0)],
    ['reachable', (flat) => reachable(flat, span, at6, toGrains(0.25))],
    ['excerptLines', (flat) => [...excerptLines(flat, 6, toGrains(4), toGrains(12))]],
    ['the exact verifier over every translation', (flat) => verifier(flat, 0).every(span, 6, null)],
    ['the tolerant verifier near a candidate', (flat) => verifier(flat, 0.1).near(span, { ...at6, within: toGrains(0.1) })],
    ['the tolerant verifier over every translation', (flat) => verifier(flat, 0.1).every(span, 6, null)],
    ['bestInPiece, given lines made elsewhere', (flat) => bestInPiece({ flat, piece: 6, lines: excerptLines(whole, 6, -Infinity, Infinity), window: material, startGrains: 0, spanGrains: toGrains(8), tolGrains: toGrains(0.1) }, null)],
    ['holdsAt', (flat) => holdsAt(flat, material, at6, material.length)],
    ['piecesHolding', (flat) => piecesHolding(material, flat)],
    ['piecePoints', (flat) => piecePoints(flat, 6)],
    ['warmUpPassages', (flat) => warmUpPassages(flat)],
    ['scanBest', (flat) => scanBest(corpusIndex({ ...buildTriples(whole), points: flat }), { ...span, points: material.slice(0, 6) })],
  ];

  it.each(cases)('%s answers as over the points all in memory', (_, call) => {
    const flat = lazy();
    expect(call(flat)).toEqual(call(whole));
    expect(flat.touched.size).toBeGreaterThan(0);
  });

  it('the verifiers find the passage where it was taken from (the comparison above is not of empty answers)', () => {
    expect(verifyShift(whole, span, 6, at6.shift, 0).score).toBe(1);
    expect(holdsAt(whole, material, at6, material.length)).toBe(true);
  });

  it("gathering a key's postings asks for the piece of each posting's anchor", () => {
    const flat = lazy();
    const index = corpusIndex({ ...buildTriples(whole), points: flat });
    index.gather(0);
    const reference = corpusIndex(buildTriples(whole));
    reference.gather(0);
    const [from, to] = [index.starts[0], index.starts[1]];
    expect(Array.from(index.posted.subarray(2 * from, 2 * to))).toEqual(Array.from(reference.posted.subarray(2 * from, 2 * to)));
    expect(flat.touched.size).toBeGreaterThan(0);
  });

  it('reading ahead asks for every piece, a step at a time, and ends at once over points all in memory', () => {
    const flat = lazy();
    const steps = [...readAhead(flat, 16)];
    expect(steps).toEqual(Array.from({ length: Math.floor(corpus.pieces.length / 16) }, (_, i) => 16 * (i + 1)));
    expect(flat.touched.size).toBe(corpus.pieces.length);
    expect(Array.from(flat.at)).toEqual(Array.from(whole.at));
    expect([...readAhead(whole, 16)]).toEqual([]);
  });
});

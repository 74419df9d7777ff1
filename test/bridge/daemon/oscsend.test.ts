/**
 * OSC from a real outside client: Debian's liblo-tools `oscsend`, a
 * separate implementation of OSC 1.0 (liblo), plays a corpus passage
 * transposed, note by note, to `earwitness listen`; the warning on
 * /events must name that piece and that transposition.
 */
import { execFileSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ScoreEvent, WarningEvent } from '../../../contract/events.js';
import { tool } from '../../helpers/which.js';
import { type SpawnedDaemon, type TestCorpus, eventually, health, listen, passage, spawnDaemon, writeCorpus } from '../../helpers/daemon.js';

const oscsend = tool('oscsend', 'liblo-tools');

describe.skipIf(!oscsend.path)(`live OSC from ${oscsend.label}`, () => {
  let corpus: TestCorpus;
  let d: SpawnedDaemon;
  beforeAll(async () => {
    corpus = writeCorpus();
    d = await spawnDaemon(['--corpus', corpus.dir, '--preset', 'livecode']);
  });
  afterAll(async () => {
    await d?.stop();
  });

  const send = (...args: string[]): void => void execFileSync(oscsend.path!, ['localhost', String(d.osc), ...args]);

  it('warns about the piece played, with its transposition, on /events', async () => {
    const events = await listen(d.http);
    // Beats 8–24 of one piece, 5 semitones up, played from beat 100: the corpus passage + (92 beats, +5).
    const played = passage(corpus.pieces['brinewater.mid'], 8, 24, 100, 5);
    for (const n of played) send('/ew/note', 'iiff', String(n.pitch), String(n.velocity), String(n.duration), String(n.onset));
    const warning = await events.next<WarningEvent>((e) => e.type === 'warning');
    expect(warning.piece).toBe('brinewater.mid');
    expect(warning.title).toBe('brinewater');
    expect(warning.transposition).toBe(5);
    expect(warning.score).toBeGreaterThanOrEqual(0.7);
    expect(warning.pieceStart).toBeGreaterThanOrEqual(8);
    expect(warning.pieceStart).toBeLessThan(24);
    expect(warning.startBeat - warning.pieceStart).toBeCloseTo(92, 6);
    // Every note was heard, in order, and the last evaluation includes the last one.
    const last = await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === played.length);
    expect(last.piece).toBe('brinewater.mid');
    expect(last.timeShift).toBeCloseTo(92, 6);
    expect(last.excerpt!.filter((n) => n.matched).length).toBe(last.matched);
    // What the pass cost the scorer: the figure /health gives for the latest one.
    expect(last.scoringMs).toBeGreaterThan(0);
    expect((await health(d.http)).lastEvaluationMs).toBe(last.scoringMs);
    expect(events.events.filter((e) => e.type === 'note').map((e) => e.seq)).toEqual(played.map((_, i) => i + 1));
    events.close();
  });

  it('accepts an int where a float is asked for, as oscsend sends what it is given', async () => {
    send('/ew/tempo', 'i', '90');
    const h = await eventually(() => health(d.http), (v) => v.clock.bpm === 90);
    expect(h.clock.bpm).toBe(90);
    expect(h.badInput).toEqual({});
  });

  it('/ew/reset clears the warning and starts a new passage in the same session', async () => {
    const events = await listen(d.http);
    const before = await health(d.http);
    expect(before.standing).toBe('brinewater.mid');
    send('/ew/reset');
    const clear = await events.next((e) => e.type === 'clear');
    expect(clear).toMatchObject({ type: 'clear', piece: 'brinewater.mid' });
    send('/ew/note', 'iif', '60', '90', '0.5');
    const score = await events.next<ScoreEvent>((e) => e.type === 'score' && e.seq === before.notes + 1);
    expect(score.windowNotes).toBe(1);
    const after = await health(d.http);
    expect(after.session).toBe(before.session);
    expect(after.standing).toBeNull();
    events.close();
  });
});

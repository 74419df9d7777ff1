/**
 * Scoring never holds input up, and never falls behind by more than one
 * batch: notes arriving while the worker is busy are folded into the next
 * evaluation, each evaluation sends one `score` carrying the seq of the
 * last note it includes, and every note is in exactly one evaluation.
 */
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Daemon, startDaemon } from '../../../bridge/daemon/daemon.js';
import type { DaemonEvent, ScoreEvent } from '../../../contract/events.js';
import { loadPreset } from '../../../bridge/formats/presets.js';
import { WORKER_URL, melody, tempDir, writeCorpus } from '../../helpers/daemon.js';

describe('coalescing', () => {
  let daemon: Daemon;
  const events: DaemonEvent[] = [];
  beforeAll(async () => {
    daemon = await startDaemon({
      corpus: writeCorpus().dir, preset: loadPreset('livecode'), oscPort: 0, httpPort: 0, oscOut: null,
      midi: { input: null, thru: null, channels: null }, log: join(tempDir('coalesce'), 'sessions.db'), workerUrl: WORKER_URL,
    });
    daemon.onEvent((e) => events.push(e));
  });
  afterAll(async () => {
    await daemon?.stop();
  });

  it('warms up while nothing is played, then says in /health how many notes it played and that it ran to the end', async () => {
    while (daemon.health().warmUp === null) await new Promise((resolve) => setTimeout(resolve, 20));
    expect(daemon.health().warmUp).toMatchObject({ complete: true, notes: expect.any(Number) as number });
    expect((daemon.health().warmUp as { notes: number }).notes).toBeGreaterThan(50);
    expect(daemon.health().evaluations).toBe(0);
  });

  it('folds a burst into few evaluations, one score each, ending at the last note', async () => {
    const burst = melody(5, 200);
    const now = Date.now();
    for (const n of burst) daemon.handle({ kind: 'note', pitch: n.pitch, velocity: 90, duration: n.duration, beat: n.onset, channel: 1 }, now);
    const done = new Promise<void>((resolve) => daemon.onEvent((e) => e.type === 'score' && e.seq === burst.length && resolve()));
    if (!events.some((e) => e.type === 'score' && e.seq === burst.length)) await done;
    const scores = events.filter((e): e is ScoreEvent => e.type === 'score');
    const h = daemon.health();
    expect(scores.length).toBe(h.evaluations);
    expect(scores.length).toBeLessThan(burst.length);
    expect((h.evaluations as number) + (h.coalesced as number)).toBe(burst.length);
    const seqs = scores.map((s) => s.seq);
    expect(seqs).toEqual([...seqs].sort((a, b) => a - b));
    expect(new Set(seqs).size).toBe(seqs.length);
    expect(seqs[0]).toBe(1); // the first note found the worker idle
    expect(seqs[seqs.length - 1]).toBe(burst.length);
    // The last window is the last 8 beats of the burst, (newest − 8, newest].
    const newest = burst[burst.length - 1].onset;
    expect(scores[scores.length - 1].windowNotes).toBe(burst.filter((n) => n.onset > newest - 8).length);
  });
});
